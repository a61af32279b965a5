import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { AuditEventsQuery, AuditFilters } from '@shared/schemas/audit.schema';
import type { AuditActorOption, AuditChainCheck, AuditCheckpoint, AuditLogEvent } from '@shared/types/audit';
import { api, qs } from '@client/lib/api-client';

export const auditKey = ['audit'] as const;

export const getAuditLogQueryOptions = (params: Partial<AuditEventsQuery>) =>
  queryOptions({
    queryKey: [...auditKey, 'events', params],
    queryFn: () => api.get<Page<AuditLogEvent>>(`/api/audit/events${qs(params)}`),
    placeholderData: keepPreviousData,
  });
export const useAuditLog = (params: Partial<AuditEventsQuery>) => useQuery(getAuditLogQueryOptions(params));

export const useAuditActors = () => useQuery({ queryKey: [...auditKey, 'actors'], queryFn: () => api.get<AuditActorOption[]>('/api/audit/actors'), staleTime: 5 * 60_000 });

const chainCheckKey = [...auditKey, 'chain-check'] as const;

/** The tenant's latest chain check, polled each second while it runs. */
export const useChainCheck = () =>
  useQuery({
    queryKey: chainCheckKey,
    queryFn: () => api.get<AuditChainCheck | null>('/api/audit/chain-checks/latest'),
    refetchInterval: (q) => (q.state.data?.status === 'running' ? 1_000 : false),
  });

export function useStartChainCheck() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.post<AuditChainCheck>('/api/audit/chain-checks'),
    onSuccess: (check) => qc.setQueryData(chainCheckKey, check),
  });
}

export const useCheckpoints = () => useQuery({ queryKey: [...auditKey, 'checkpoints'], queryFn: () => api.get<AuditCheckpoint[]>('/api/audit/checkpoints') });

/** The export's address for the filters on screen; the browser downloads it as it streams. */
export const auditExportHref = (format: 'csv' | 'jsonl', filters: AuditFilters) => `/api/audit/export${qs({ format, ...filters })}`;
