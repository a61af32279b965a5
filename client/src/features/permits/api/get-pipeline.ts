import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PipelineDetail } from '@shared/assets/types';
import { api } from '@client/lib/api-client';

export const getPermitPipelineQueryOptions = (id: string) =>
  queryOptions({
    queryKey: ['pipelines', 'detail', id],
    queryFn: () => api.get<PipelineDetail>(`/api/pipelines/${encodeURIComponent(id)}`),
    staleTime: 5 * 60_000,
  });

export const usePermitPipeline = (id: string | undefined) => useQuery({ ...getPermitPipelineQueryOptions(id ?? ''), enabled: Boolean(id) });
