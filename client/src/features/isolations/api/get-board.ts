import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { BoardQuery } from '@shared/schemas/isolation.schema';
import type { Board } from '@shared/types/board';
import { api, qs } from '@client/lib/api-client';

export const boardKey = ['board'] as const;

export const getBoardQueryOptions = (filters: BoardQuery) =>
  queryOptions({
    queryKey: [...boardKey, filters],
    queryFn: () => api.get<Board>(`/api/board${qs({ pipelineId: filters.pipelineId, permitState: filters.permitState, unacknowledged: filters.unacknowledged })}`),
    placeholderData: keepPreviousData,
  });

export const useBoard = (filters: BoardQuery) => useQuery(getBoardQueryOptions(filters));
