import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PipeSizesResponse } from '@shared/types/calc';
import { api } from '@client/lib/api-client';

export const getPipeSizesQueryOptions = () =>
  queryOptions({
    queryKey: ['calc', 'pipe-sizes'],
    queryFn: () => api.get<PipeSizesResponse>('/api/calc/pipe-sizes'),
    staleTime: Infinity,
  });

export const usePipeSizes = () => useQuery(getPipeSizesQueryOptions());
