import { queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { HandoverAcceptInput, HandoverCreateInput } from '@shared/schemas/timed-checks.schema';
import type { PersonOption, UserRow } from '@shared/types/admin';
import type { AcceptedHandover, HandoverRow } from '@shared/types/timed-checks';
import { api, ApiError, qs } from '@client/lib/api-client';
import { gasKeys, permitsPrefix } from './keys';

const base = (permitId: string) => `/api/permits/${encodeURIComponent(permitId)}/handovers`;

export const getHandoversQueryOptions = (permitId: string) =>
  queryOptions({ queryKey: gasKeys.handovers(permitId), queryFn: () => api.get<Page<HandoverRow>>(`${base(permitId)}${qs({ pageSize: 10 })}`) });
export const useHandovers = (permitId: string) => useQuery(getHandoversQueryOptions(permitId));

export function useCreateHandover(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: HandoverCreateInput) => api.post<HandoverRow>(base(permitId), input),
    onSuccess: () => qc.invalidateQueries({ queryKey: gasKeys.handovers(permitId) }),
  });
}

export function useAcceptHandover(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ handoverId, ...input }: HandoverAcceptInput & { handoverId: string }) => api.post<AcceptedHandover>(`${base(permitId)}/${encodeURIComponent(handoverId)}/accept`, input),
    onSuccess: () => Promise.all([qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) }), qc.invalidateQueries({ queryKey: permitsPrefix })]),
  });
}

/** Contractor leads of the permit's contractor; null when this person may not list people. */
export const getLeadsQueryOptions = (organisationId: string) =>
  queryOptions({
    queryKey: ['gas-tests', 'leads', organisationId],
    queryFn: async (): Promise<PersonOption[] | null> => {
      try {
        const page = await api.get<Page<UserRow>>(`/api/users${qs({ role: 'contractor_lead', organisationId, pageSize: 200 })}`);
        return [...new Map(page.items.map((u) => [u.userId, { userId: u.userId, name: u.name }])).values()];
      } catch (err) {
        if (err instanceof ApiError && err.status === 403) return null;
        throw err;
      }
    },
    staleTime: 5 * 60_000,
  });
export const useLeads = (organisationId: string, enabled: boolean) => useQuery({ ...getLeadsQueryOptions(organisationId), enabled });
