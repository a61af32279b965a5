import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { PermitState } from '@shared/permit/states';
import type { StepCondition, StepKind } from '@shared/schemas/isolation.schema';
import { api, qs } from '@client/lib/api-client';

/** The permit states the board can be filtered by: those in which isolations can be on. */
export const boardPermitStates = ['accepted', 'isolated', 'live', 'suspended', 'work_complete', 'cancelled'] as const satisfies readonly PermitState[];
export type BoardPermitState = (typeof boardPermitStates)[number];

export interface BoardFilters {
  pipelineId?: string;
  permitState?: BoardPermitState;
}

export interface BoardPermitRef {
  id: string;
  number: string;
  state: PermitState;
}

/** One isolation in place now, as GET /api/board answers. */
export interface BoardItem {
  stepId: string;
  status: 'applied' | 'verified';
  pipelineId: string;
  pipelineName: string;
  pointId: string | null;
  label: string;
  position: number;
  kind: StepKind;
  condition: StepCondition;
  lockNumber: string | null;
  tagNumber: string | null;
  appliedAt: string;
  appliedByName: string;
  verifiedAt: string | null;
  verifiedByName: string | null;
  remotelyOperable: boolean;
  remoteAckAt: string | null;
  controlRoomAckAppliedAt: string | null;
  plugBuiltAt: string | null;
  permit: BoardPermitRef & { fromPosition: number; toPosition: number };
  /** Every permit holding the same point (group lockout). */
  permits: BoardPermitRef[];
  nextGasTestDue: string | null;
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
