import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PipeDimensions } from '@shared/calc';
import type { PipeQuery } from '@shared/schemas/calc.schema';
import { api, qs } from '@client/lib/api-client';

export const getPipeDimensionsQueryOptions = (q: PipeQuery) =>
  queryOptions({
    queryKey: ['calc', 'pipe', q],
    queryFn: () => api.get<PipeDimensions>(`/api/calc/pipe${qs(q)}`),
    staleTime: Infinity,
  });

export function usePipeDimensions(q: PipeQuery | null) {
  return useQuery({ ...getPipeDimensionsQueryOptions(q ?? { nps: 0, schedule: 'STD' }), enabled: q !== null });
}
