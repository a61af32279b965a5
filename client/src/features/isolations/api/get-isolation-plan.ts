import { queryOptions, useQuery } from '@tanstack/react-query';
import type { StepCondition, StepKind } from '@shared/schemas/isolation.schema';
import type { PlugWarningCode } from '@shared/calc';
import { api } from '@client/lib/api-client';

export type StepStatus = 'planned' | 'applied' | 'verified' | 'removed';

export interface PlugAsBuilt {
  bentoniteLb: number;
  waterLb: number;
  lengthIn: number;
  builtAt: string;
}

/** One step of a permit's isolation plan with its record, as GET /api/permits/:id/isolations answers. */
export interface IsolationStep {
  id: string;
  permitId: string;
  seq: number;
  pointId: string | null;
  label: string;
  position: number;
  kind: StepKind;
  condition: StepCondition;
  status: StepStatus;
  remotelyOperable: boolean;
  lockId: string | null;
  lockNumber: string | null;
  tagId: string | null;
  tagNumber: string | null;
  appliedBy: string | null;
  appliedByName: string | null;
  appliedAt: string | null;
  appliedEnteredLate: boolean;
  photoAttachmentId: string | null;
  remoteAckAt: string | null;
  remoteAckByName: string | null;
  verifiedBy: string | null;
  verifiedByName: string | null;
  verifiedAt: string | null;
  verificationMethod: string | null;
  verificationReading: number | null;
  verificationUnit: string | null;
  verificationNotes: string | null;
  removedByName: string | null;
  removedAt: string | null;
  removalNote: string | null;
  controlRoomAckAppliedAt: string | null;
  controlRoomAckRemovedAt: string | null;
  plugDiameterIn: number | null;
  plugAsBuilt: PlugAsBuilt | null;
  plugWarnings: { code: PlugWarningCode; message: string }[];
  plugWarningsAckAt: string | null;
}

export interface IsolationPlan {
  items: IsolationStep[];
}

/**
 * The same endpoint and cache entry the permit page reads for its summary of the plan, so a change
 * made here redraws the rest of the page too; invalidating the permit's key refreshes both.
 */
export const isolationPlanKey = (permitId: string) => ['permits', 'detail', permitId, 'isolations'] as const;

export const getIsolationPlanQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: isolationPlanKey(permitId),
    queryFn: () => api.get<IsolationPlan>(`/api/permits/${encodeURIComponent(permitId)}/isolations`),
  });

export const useIsolationPlan = (permitId: string) => useQuery(getIsolationPlanQueryOptions(permitId));
