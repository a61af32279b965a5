import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { PermitState } from '@shared/permit/states';
import type { BoardItem } from '@shared/types/board';
import { api, qs } from '@client/lib/api-client';

export type { BoardItem, BoardPermitRef } from '@shared/types/board';

/** The permit states the board can be filtered by: those in which isolations can be on. */
export const boardPermitStates = ['accepted', 'isolated', 'live', 'suspended', 'work_complete', 'cancelled'] as const satisfies readonly PermitState[];
export type BoardPermitState = (typeof boardPermitStates)[number];

export interface BoardFilters {
  pipelineId?: string;
  permitState?: BoardPermitState;
}

export interface Board {
  items: BoardItem[];
  total: number;
  generatedAt: string;
}

export const boardKey = ['board'] as const;

export const getBoardQueryOptions = (filters: BoardFilters) =>
  queryOptions({
    queryKey: [...boardKey, filters],
    queryFn: () => api.get<Board>(`/api/board${qs({ pipelineId: filters.pipelineId, permitState: filters.permitState })}`),
    placeholderData: keepPreviousData,
  });

export const useBoard = (filters: BoardFilters) => useQuery(getBoardQueryOptions(filters));
