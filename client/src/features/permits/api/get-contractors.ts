import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { OrganisationRow } from '@shared/types/admin';
import { api, qs } from '@client/lib/api-client';

/** Contractor organisations of the tenant (GET /api/organisations answers every kind). */
export const getContractorsQueryOptions = () =>
  queryOptions({
    queryKey: ['organisations', 'list', { page: 1, pageSize: 200 }],
    queryFn: () => api.get<Page<OrganisationRow>>(`/api/organisations${qs({ page: 1, pageSize: 200 })}`),
    select: (page: Page<OrganisationRow>) => page.items.filter((o) => o.kind === 'contractor'),
    staleTime: 5 * 60_000,
  });

export const useContractors = () => useQuery(getContractorsQueryOptions());
