import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { IsolationPoint } from '@shared/assets/types';
import { api, qs } from '@client/lib/api-client';

/** The register's points on one pipeline, for adding to a plan (a line has tens of points, not hundreds). */
export const getPipelinePointsQueryOptions = (pipelineId: string) =>
  queryOptions({
    queryKey: ['isolation-points', { pipelineId, pageSize: 200 }],
    queryFn: () => api.get<Page<IsolationPoint>>(`/api/isolation-points${qs({ pipelineId, pageSize: 200 })}`),
    staleTime: 5 * 60_000,
  });

export const usePipelinePoints = (pipelineId: string, enabled = true) => useQuery({ ...getPipelinePointsQueryOptions(pipelineId), enabled });
