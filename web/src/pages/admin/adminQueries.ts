import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { api, withQuery } from '../../api/client.js';
import type {
  AdminLabStateResponse, AdminStorageResponse, AdminUsageResponse, AllowanceRequest, AuditQueryInput, AuditResponse,
  CreditAdjustmentRequest, FarmHealthResponse, SuspensionRequest,
} from '../../api/contract.js';

/** The console's query keys: all under ['admin'], so an action refreshes every tab at once. */
export const adminKeys = {
  all: ['admin'] as const,
  usage: (months: number) => ['admin', 'usage', months] as const,
  farm: ['admin', 'farm'] as const,
  storage: ['admin', 'storage'] as const,
  audit: (q: AuditQueryInput) => ['admin', 'audit', q] as const,
};

export const usageCsvUrl = (months: number) => withQuery('/api/admin/usage.csv', { months });
export const auditCsvUrl = (q: AuditQueryInput) => withQuery('/api/admin/audit.csv', { ...q });

export function useAdminUsage(months: number) {
  return useQuery({ queryKey: adminKeys.usage(months), queryFn: () => api<AdminUsageResponse>('GET', withQuery('/api/admin/usage', { months })), placeholderData: (p) => p });
}

export function useFarmHealth() {
  return useQuery({ queryKey: adminKeys.farm, queryFn: () => api<FarmHealthResponse>('GET', '/api/admin/farm'), refetchInterval: 3000 });
}

export function useAdminStorage() {
  return useQuery({ queryKey: adminKeys.storage, queryFn: () => api<AdminStorageResponse>('GET', '/api/admin/storage') });
}

export function useAuditTrail(q: AuditQueryInput) {
  return useQuery({ queryKey: adminKeys.audit(q), queryFn: () => api<AuditResponse>('GET', withQuery('/api/admin/audit', { ...q })), placeholderData: (p) => p });
}

/** A mutation whose success refreshes the whole console (balances, standings, the trail). */
function useAdminAction<V, R>(fn: (v: V) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: fn, onSuccess: () => qc.invalidateQueries({ queryKey: adminKeys.all }) });
}

export const useAdjustCredits = (labId: string) =>
  useAdminAction((body: CreditAdjustmentRequest) => api<unknown>('POST', `/api/labs/${encodeURIComponent(labId)}/credits/adjustments`, body));
export const useSetAllowance = (labId: string) =>
  useAdminAction((body: AllowanceRequest) => api<AdminLabStateResponse>('PUT', `/api/admin/labs/${encodeURIComponent(labId)}/allowance`, body));
export const useSuspension = (labId: string, suspend: boolean) =>
  useAdminAction((body: SuspensionRequest) => api<AdminLabStateResponse>('POST', `/api/admin/labs/${encodeURIComponent(labId)}/${suspend ? 'suspension' : 'reinstatement'}`, body));
export const useRetryJob = () => useAdminAction((job: { queue: string; jobId: string }) => api<unknown>('POST', `/api/admin/farm/jobs/${encodeURIComponent(job.queue)}/${encodeURIComponent(job.jobId)}/retry`));
export const useRetentionNotice = () => useAdminAction((labId: string) => api<{ mailedTo: string[]; runs: number }>('POST', `/api/admin/labs/${encodeURIComponent(labId)}/retention-notice`));
