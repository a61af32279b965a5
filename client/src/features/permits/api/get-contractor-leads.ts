import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { UserRow } from '@shared/types/admin';
import { api, ApiError, qs } from '@client/lib/api-client';

/**
 * Contractor leads of one organisation. Not every role may list people: a refusal answers null,
 * and the picker says the lead is named when the permit is accepted.
 */
export const getContractorLeadsQueryOptions = (organisationId: string) =>
  queryOptions({
    queryKey: ['users', 'list', { role: 'contractor_lead', organisationId, pageSize: 200 }],
    queryFn: async (): Promise<UserRow[] | null> => {
      try {
        const page = await api.get<Page<UserRow>>(`/api/users${qs({ role: 'contractor_lead', organisationId, page: 1, pageSize: 200 })}`);
        const seen = new Set<string>();
        return page.items.filter((u) => !seen.has(u.userId) && seen.add(u.userId));
      } catch (err) {
        if (err instanceof ApiError && err.status === 403) return null;
        throw err;
      }
    },
    staleTime: 5 * 60_000,
  });

export const useContractorLeads = (organisationId: string | undefined) =>
  useQuery({ ...getContractorLeadsQueryOptions(organisationId ?? ''), enabled: Boolean(organisationId) });
