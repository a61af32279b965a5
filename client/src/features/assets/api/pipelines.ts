import { keepPreviousData, queryOptions, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { PipelineInput, PipelinePatch, PipelinesQuery, PointInput, PointPatch } from '@shared/schemas/assets.schema';
import type { IsolationPoint, PipelineDetail, PipelineSummary } from '@shared/assets/types';
import { api, qs } from '@client/lib/api-client';

export const getPipelinesQueryOptions = (q: Partial<PipelinesQuery>) =>
  queryOptions({ queryKey: ['assets', 'pipelines', q], queryFn: () => api.get<Page<PipelineSummary>>(`/api/pipelines${qs(q)}`), placeholderData: keepPreviousData });
export const usePipelines = (q: Partial<PipelinesQuery>) => useQuery(getPipelinesQueryOptions(q));

export const getPipelineQueryOptions = (id: string) => queryOptions({ queryKey: ['assets', 'pipeline', id], queryFn: () => api.get<PipelineDetail>(`/api/pipelines/${id}`) });
export const usePipeline = (id: string) => useQuery(getPipelineQueryOptions(id));

// Any change to the register can move a count, a segment or a list row: refresh the whole 'assets' key.
function useInvalidateAssets() {
  const qc = useQueryClient();
  return () => qc.invalidateQueries({ queryKey: ['assets'] });
}

export function useCreatePipeline() {
  const invalidate = useInvalidateAssets();
  return useMutation({ mutationFn: (input: PipelineInput) => api.post<PipelineDetail>('/api/pipelines', input), onSuccess: invalidate });
}

export function useUpdatePipeline(id: string) {
  const invalidate = useInvalidateAssets();
  return useMutation({ mutationFn: (patch: PipelinePatch) => api.patch<PipelineDetail>(`/api/pipelines/${id}`, patch), onSuccess: invalidate });
}

export function useCreatePoint() {
  const invalidate = useInvalidateAssets();
  return useMutation({ mutationFn: (input: PointInput) => api.post<IsolationPoint>('/api/isolation-points', input), onSuccess: invalidate });
}

export function useUpdatePoint() {
  const invalidate = useInvalidateAssets();
  return useMutation({ mutationFn: ({ id, patch }: { id: string; patch: PointPatch }) => api.patch<IsolationPoint>(`/api/isolation-points/${id}`, patch), onSuccess: invalidate });
}
