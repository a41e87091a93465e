import { useEffect, useState } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router';
import { api, apiUpload, withQuery } from './client.js';
import type {
  AdminLabsResponse, AdminUsersResponse, FigureResponse, InvitationPreviewResponse, LabDetailResponse,
  ListFiguresQueryInput, ListFiguresResponse, ListRunsQueryInput, ListRunsResponse, MeResponse, MeStateResponse, OutboxResponse,
  PasswordResetCheckResponse,
  RunResponse, TokensResponse, SeriesResponse, EstimateResponse, RunSpecInput, BackgroundUploadResponse,
} from './contract.js';
import type { CreateFigureRequest, FigureVersion, LabFiguresResponse, OrderPrintRequest, UpdateFigureRequest } from './contract.js';
import { recentlyPaid } from '../pages/credits/money.js';
import type { AbandonPurchaseResponse, CheckoutResponse, CreditCheckResponse, CreditPackId, CreditsSummaryResponse, PurchaseResponse, UsageResponse } from './contract.js';
import { RUN_EVENT_NAMES, runEventSchema } from './contract.js';
import { fetchRunJson, fetchViewLegend, infoJsonUrl, type ArtifactBase } from '../viewer/runArtifacts.js';

/** Query keys in one table, so invalidation after a mutation names the same keys the pages read. */
export const keys = {
  me: ['me'] as const,
  tokens: ['me', 'tokens'] as const,
  lab: (labId: string) => ['lab', labId] as const,
  runs: (q: ListRunsQueryInput) => ['runs', q] as const,
  run: (id: string) => ['run', id] as const,
  series: (id: string) => ['series', id] as const,
  estimate: (spec: unknown) => ['estimate', spec] as const,
  upload: (sha256: string) => ['upload', sha256] as const,
  runJson: (base: ArtifactBase) => ['artifacts', base, 'run.json'] as const,
  legend: (base: ArtifactBase, layer: string, palette: string) => ['artifacts', base, 'legend', layer, palette] as const,
  view: (base: ArtifactBase, layer: string, palette: string) => ['artifacts', base, 'view', layer, palette] as const,
  figures: (q: ListFiguresQueryInput) => ['figures', q] as const,
  figure: (slug: string) => ['figure', slug] as const,
  invitation: (token: string) => ['invitation', token] as const,
  resetLink: (token: string) => ['reset-link', token] as const,
  adminLabs: ['admin', 'labs'] as const,
  adminUsers: ['admin', 'users'] as const,
  outbox: ['dev', 'outbox'] as const,
  credits: (labId: string) => ['credits', labId] as const,
  creditUsage: (labId: string) => ['credits', labId, 'usage'] as const,
  purchase: (labId: string, id: string) => ['credits', labId, 'purchase', id] as const,
  creditCheck: (labId: string, credits: number) => ['credits', labId, 'check', credits] as const,
};

/** The signed-in person, or null: the API answers "not signed in" with 200, so public pages log no error. */
export function useMe() {
  return useQuery({
    queryKey: keys.me,
    queryFn: async (): Promise<MeResponse | null> => {
      const me = await api<MeStateResponse>('GET', '/api/me');
      return me.signedIn ? me : null;
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

/**
 * Signs out and lands on the front page. The page leaves first, so no signed-in page renders without
 * a person: the navigation is committed at once (flushSync) rather than in a transition, which could
 * still be pending when the person is cleared, and the page behind sign-in would then send them to the
 * sign-in page instead.
 */
export function useSignOut() {
  const qc = useQueryClient();
  const navigate = useNavigate();
  return useMutation({
    mutationFn: () => api<void>('POST', '/api/auth/sign-out'),
    meta: { quiet401: true },
    onSettled: async () => {
      await navigate('/', { replace: true, flushSync: true });
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

/** A run; polls while it is still working unless `live` says server-sent events are delivering changes. */
export function useRun(id: string, live = false) {
  return useQuery({
    queryKey: keys.run(id),
    queryFn: () => api<RunResponse>('GET', `/api/runs/${encodeURIComponent(id)}`),
    enabled: id !== '',
    refetchInterval: (query) => {
      const s = query.state.data?.run.status;
      if (s && ['finished', 'failed', 'cancelled'].includes(s)) return false;
      return live ? 15_000 : 1500;
    },
  });
}

/**
 * Live progress of a working run from GET /api/runs/:id/events: each `run` event replaces the cached
 * run. Answers whether the stream is connected, so useRun can stop polling meanwhile.
 */
export function useRunEvents(id: string, enabled: boolean): boolean {
  const qc = useQueryClient();
  const [connected, setConnected] = useState(false);
  useEffect(() => {
    if (!enabled || typeof EventSource === 'undefined') return;
    const source = new EventSource(`/api/runs/${encodeURIComponent(id)}/events`, { withCredentials: true });
    source.onopen = () => setConnected(true);
    source.onerror = () => setConnected(false);
    source.addEventListener(RUN_EVENT_NAMES.change, (e) => {
      const parsed = runEventSchema.safeParse(JSON.parse((e as MessageEvent<string>).data));
      if (parsed.success) qc.setQueryData(keys.run(id), parsed.data);
    });
    source.addEventListener(RUN_EVENT_NAMES.end, () => {
      source.close();
      setConnected(false);
      void qc.invalidateQueries({ queryKey: keys.run(id) });
      void qc.invalidateQueries({ queryKey: ['runs'] });
    });
    return () => {
      source.close();
      setConnected(false);
    };
  }, [id, enabled, qc]);
  return connected;
}

export function useSeries(id: string) {
  return useQuery({
    queryKey: keys.series(id),
    queryFn: () => api<SeriesResponse>('GET', `/api/series/${encodeURIComponent(id)}`),
    refetchInterval: (query) =>
      query.state.data?.series.runs.some((r) => !['finished', 'failed', 'cancelled'].includes(r.status)) ? 2000 : false,
  });
}

/** The cost prediction of a spec (POST /api/estimates); `spec` null while the form does not validate. */
export function useEstimate(spec: RunSpecInput | null) {
  return useQuery({
    queryKey: keys.estimate(spec),
    queryFn: () => api<EstimateResponse>('POST', '/api/estimates', { spec }),
    enabled: spec !== null,
    placeholderData: (prev) => prev,
    staleTime: 5 * 60_000,
    retry: false,
  });
}

/** An uploaded background's summary, for a duplicated spec that names one by hash. */
export function useUpload(sha256: string | null) {
  return useQuery({
    queryKey: keys.upload(sha256 ?? ''),
    queryFn: () => api<BackgroundUploadResponse>('GET', `/api/uploads/background/${sha256}`),
    enabled: Boolean(sha256),
    staleTime: Infinity,
  });
}

export function useUploadBackground(labId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (file: File) =>
      apiUpload<BackgroundUploadResponse>(withQuery('/api/uploads/background', { labId }), file, file.name.toLowerCase().endsWith('.png') ? 'image/png' : 'application/octet-stream'),
    onSuccess: (r) => qc.setQueryData(keys.upload(r.upload.sha256), r),
  });
}

export function useRunJson(base: ArtifactBase, enabled = true) {
  return useQuery({ queryKey: keys.runJson(base), queryFn: () => fetchRunJson(base), enabled, staleTime: Infinity, meta: { quiet401: true } });
}

/** The legend a view was drawn with (GET …/legend/:layer/:palette); null while the view is not drawn. */
export function useViewLegend(base: ArtifactBase, layer: string, palette: string, enabled = true) {
  return useQuery({ queryKey: keys.legend(base, layer, palette), queryFn: () => fetchViewLegend(base, layer, palette), enabled, staleTime: 60_000 });
}

/** Whether a view (layer × palette) has been drawn: its info.json exists. */
export function useViewDrawn(base: ArtifactBase, layer: string, palette: string, enabled = true) {
  return useQuery({
    queryKey: keys.view(base, layer, palette),
    queryFn: async () => (await fetch(infoJsonUrl(base, layer, palette), { credentials: 'same-origin' })).ok,
    enabled,
    staleTime: 60_000,
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

/** Whether a mailed reset link still works, asked on arrival; uses nothing, so asking again is harmless. */
export function useResetLinkCheck(token: string, enabled: boolean) {
  return useQuery({
    queryKey: keys.resetLink(token),
    queryFn: () => api<PasswordResetCheckResponse>('POST', '/api/auth/password-reset/check', { token }),
    enabled,
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

/** A lab's credits page (shared/api/credits.ts); polls while a purchase waits for its webhook. */
export function useCredits(labId: string | null | undefined, waitingForPayment = false) {
  return useQuery({
    queryKey: keys.credits(labId ?? ''),
    queryFn: () => api<CreditsSummaryResponse>('GET', `/api/labs/${encodeURIComponent(labId!)}/credits`),
    enabled: Boolean(labId),
    refetchInterval: (query) => (waitingForPayment && !query.state.data?.purchases.some(recentlyPaid) ? 1000 : false),
  });
}

export function useCreditUsage(labId: string) {
  return useQuery({
    queryKey: keys.creditUsage(labId),
    queryFn: () => api<UsageResponse>('GET', `/api/labs/${encodeURIComponent(labId)}/credits/usage`),
  });
}

export function usePurchase(labId: string, id: string) {
  return useQuery({
    queryKey: keys.purchase(labId, id),
    queryFn: () => api<PurchaseResponse>('GET', `/api/labs/${encodeURIComponent(labId)}/credits/purchases/${encodeURIComponent(id)}`),
  });
}

/** Whether a job of `credits` would be accepted now: the run form asks before submitting. */
export function useCreditCheck(labId: string | null | undefined, credits: number | null | undefined) {
  return useQuery({
    queryKey: keys.creditCheck(labId ?? '', credits ?? 0),
    queryFn: async () => (await api<CreditCheckResponse>('POST', `/api/labs/${encodeURIComponent(labId!)}/credits/check`, { credits })).check,
    enabled: Boolean(labId) && typeof credits === 'number',
    staleTime: 5_000,
  });
}

/** Start buying a pack: the browser leaves for the checkout page the API names. */
/** A manager gives up a checkout not paid yet; the purchases list then shows it abandoned. */
export function useAbandonPurchase(labId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (purchaseId: string) => api<AbandonPurchaseResponse>('POST', `/api/labs/${encodeURIComponent(labId)}/credits/purchases/${encodeURIComponent(purchaseId)}/abandon`),
    onSettled: () => qc.invalidateQueries({ queryKey: keys.credits(labId) }),
  });
}

export function useCheckout(labId: string) {
  return useMutation({
    mutationFn: (pack: CreditPackId) => api<CheckoutResponse>('POST', `/api/labs/${encodeURIComponent(labId)}/credits/checkout`, { pack }),
    onSuccess: (out) => window.location.assign(out.url),
  });
}

// ——— figures: composing, print orders, publishing (pages under web/src/pages/figures/) ———

export function useLabFigures(labId: string | null | undefined) {
  return useQuery({
    queryKey: ['lab-figures', labId] as const,
    queryFn: () => api<LabFiguresResponse>('GET', `/api/labs/${encodeURIComponent(labId!)}/figures`),
    enabled: !!labId,
  });
}

/** The figure page polls while a print order is queued or printing. */
export function useFigureLive(slug: string) {
  return useQuery({
    queryKey: keys.figure(slug),
    queryFn: () => api<FigureResponse>('GET', `/api/figures/${encodeURIComponent(slug)}`),
    refetchInterval: (q) => {
      const d = q.state.data;
      return d && !d.withdrawn && d.figure.versions.some((v) => v.status === 'queued' || v.status === 'printing') ? 1500 : false;
    },
  });
}

function useFigureMutation<V>(call: (v: V) => Promise<FigureResponse>) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: call,
    onSuccess: (res) => {
      if (!res.withdrawn) qc.setQueryData(keys.figure(res.figure.slug), res);
      void qc.invalidateQueries({ queryKey: ['lab-figures'] });
      void qc.invalidateQueries({ queryKey: ['figures'] });
    },
  });
}

export const useCreateFigure = () => useFigureMutation((body: CreateFigureRequest) => api<FigureResponse>('POST', '/api/figures', body));
export const useUpdateFigure = (slug: string) => useFigureMutation((body: UpdateFigureRequest) => api<FigureResponse>('PUT', `/api/figures/${encodeURIComponent(slug)}`, body));
export const usePublishFigure = (slug: string) =>
  useFigureMutation((publish: boolean) => api<FigureResponse>('POST', `/api/figures/${encodeURIComponent(slug)}/${publish ? 'publish' : 'unpublish'}`));

export function useOrderPrint(slug: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: OrderPrintRequest) => api<{ version: FigureVersion }>('POST', `/api/figures/${encodeURIComponent(slug)}/versions`, body),
    onSuccess: () => void qc.invalidateQueries({ queryKey: keys.figure(slug) }),
  });
}
