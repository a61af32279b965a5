import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { PipelineSummary } from '@shared/assets/types';
import { api, qs } from '@client/lib/api-client';

/** The register's pipelines for pickers and filters (a tenant has tens, not thousands). */
export const getPermitPipelinesQueryOptions = () =>
  queryOptions({
    queryKey: ['pipelines', 'list', { page: 1, pageSize: 200 }],
    queryFn: () => api.get<Page<PipelineSummary>>(`/api/pipelines${qs({ page: 1, pageSize: 200 })}`),
    staleTime: 5 * 60_000,
  });

export const usePermitPipelines = () => useQuery(getPermitPipelinesQueryOptions());
