import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router';
import { api, withQuery } from './client.js';
import { isStatus } from './ApiError.js';
import type {
  AdminLabsResponse, AdminUsersResponse, FigureResponse, InvitationPreviewResponse, LabDetailResponse,
  ListFiguresQueryInput, ListFiguresResponse, ListRunsQueryInput, ListRunsResponse, MeResponse, OutboxResponse,
  RunResponse, TokensResponse,
} from './contract.js';

/** Query keys in one table, so invalidation after a mutation names the same keys the pages read. */
export const keys = {
  me: ['me'] as const,
  tokens: ['me', 'tokens'] as const,
  lab: (labId: string) => ['lab', labId] as const,
  runs: (q: ListRunsQueryInput) => ['runs', q] as const,
  run: (id: string) => ['run', id] as const,
  figures: (q: ListFiguresQueryInput) => ['figures', q] as const,
  figure: (slug: string) => ['figure', slug] as const,
  invitation: (token: string) => ['invitation', token] as const,
  adminLabs: ['admin', 'labs'] as const,
  adminUsers: ['admin', 'users'] as const,
  outbox: ['dev', 'outbox'] as const,
};

/** The signed-in person, or null for a reader; a 401 here is an answer, not an error. */
export function useMe() {
  return useQuery({
    queryKey: keys.me,
    meta: { quiet401: true },
    queryFn: async () => {
      try {
        return await api<MeResponse>('GET', '/api/me');
      } catch (e) {
        if (isStatus(e, 401)) return null;
        throw e;
      }
    },
    staleTime: 60_000,
  });
}

export function useSetActiveLab() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (labId: string) => api<MeResponse>('PUT', '/api/me/active-lab', { labId }),
    onSuccess: (me) => {
      qc.setQueryData(keys.me, me);
      // Runs and lab pages follow the active lab.
      void qc.invalidateQueries({ queryKey: ['runs'] });
      void qc.invalidateQueries({ queryKey: ['lab'] });
    },
  });
}

/** Signs out and lands on the front page; the page leaves first, so no signed-in page renders without a person. */
export function useSignOut() {
  const qc = useQueryClient();
  const navigate = useNavigate();
  return useMutation({
    mutationFn: () => api<void>('POST', '/api/auth/sign-out'),
    meta: { quiet401: true },
    onSettled: async () => {
      await navigate('/', { replace: true });
      qc.setQueryData(keys.me, null);
      qc.removeQueries({ predicate: (q) => q.queryKey[0] !== 'me' });
    },
  });
}

export function useLab(labId: string | null | undefined) {
  return useQuery({
    queryKey: keys.lab(labId ?? ''),
    queryFn: () => api<LabDetailResponse>('GET', `/api/labs/${encodeURIComponent(labId!)}`),
    enabled: Boolean(labId),
  });
}

export function useRuns(q: ListRunsQueryInput) {
  return useQuery({
    queryKey: keys.runs(q),
    queryFn: () => api<ListRunsResponse>('GET', withQuery('/api/runs', { ...q })),
    placeholderData: (prev) => prev,
    // Keep the list's progress bars moving while anything in view is still working.
    refetchInterval: (query) =>
      query.state.data?.runs.some((r) => !['finished', 'failed', 'cancelled'].includes(r.status)) ? 3000 : false,
  });
}

export function useRun(id: string) {
  return useQuery({
    queryKey: keys.run(id),
    queryFn: () => api<RunResponse>('GET', `/api/runs/${encodeURIComponent(id)}`),
    refetchInterval: (query) => {
      const s = query.state.data?.run.status;
      return s && ['finished', 'failed', 'cancelled'].includes(s) ? false : 1500;
    },
  });
}

export function useFigures(q: ListFiguresQueryInput) {
  return useQuery({
    queryKey: keys.figures(q),
    queryFn: () => api<ListFiguresResponse>('GET', withQuery('/api/figures', { ...q })),
    placeholderData: (prev) => prev,
    meta: { quiet401: true },
  });
}

export function useFigure(slug: string) {
  return useQuery({
    queryKey: keys.figure(slug),
    queryFn: () => api<FigureResponse>('GET', `/api/figures/${encodeURIComponent(slug)}`),
    meta: { quiet401: true },
  });
}

export function useInvitation(token: string) {
  return useQuery({
    queryKey: keys.invitation(token),
    queryFn: () => api<InvitationPreviewResponse>('GET', `/api/invitations/${encodeURIComponent(token)}`),
    meta: { quiet401: true },
  });
}

export function useTokens() {
  return useQuery({ queryKey: keys.tokens, queryFn: () => api<TokensResponse>('GET', '/api/me/tokens') });
}

export function useAdminLabs() {
  return useQuery({ queryKey: keys.adminLabs, queryFn: () => api<AdminLabsResponse>('GET', '/api/admin/labs') });
}

export function useAdminUsers() {
  return useQuery({ queryKey: keys.adminUsers, queryFn: () => api<AdminUsersResponse>('GET', '/api/admin/users') });
}

export function useOutbox(poll = false) {
  return useQuery({
    queryKey: keys.outbox,
    queryFn: () => api<OutboxResponse>('GET', '/api/dev/outbox'),
    refetchInterval: poll ? 3000 : false,
    meta: { quiet401: true },
  });
}
