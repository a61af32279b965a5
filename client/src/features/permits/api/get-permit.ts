import { queryOptions, useQuery } from '@tanstack/react-query';
import type { ChecklistItem, PermitAction } from '@shared/schemas/permit.schema';
import type { PermitState, WorkKind } from '@shared/permit/states';
import type { PermitEvent } from '@shared/permit/state-machine';
import { api } from '@client/lib/api-client';

export interface PermitTimelineEvent {
  seq: number | string;
  action: string;
  fromState: PermitState | null;
  toState: PermitState | null;
  actorName: string | null;
  actorRole: string | null;
  reason: string | null;
  data: Record<string, unknown>;
  occurredAt: string;
  entityType: string;
}

export interface PermitSignature {
  event: PermitEvent;
  signedName: string;
  passwordConfirmed: boolean;
  signedAt: string;
  email: string;
}

/** GET /api/permits/:id as the server builds it (permits.routes.ts `detail`). */
export interface PermitDetail {
  id: string;
  tenantId: string;
  number: string;
  state: PermitState;
  version: number;
  kinds: WorkKind[];
  title: string;
  scope: string;
  pipelineId: string;
  pipelineName: string;
  fromPosition: number;
  toPosition: number;
  jobReference: string | null;
  methodStatement: string;
  hazards: string;
  ppe: string[];
  checklist: ChecklistItem[];
  walkdown: ChecklistItem[];
  validFrom: string;
  validTo: string;
  contractorOrganisationId: string;
  contractorName: string;
  contractorLeadUserId: string | null;
  contractorLeadName: string | null;
  requesterUserId: string;
  requesterName: string;
  authoriserUserId: string | null;
  authoriserName: string | null;
  holderUserId: string | null;
  holderName: string | null;
  fireWatchMinutes: number;
  fireWatchPerson: string | null;
  gasTestWindowMinutes: number;
  gasTestIntervalMinutes: number;
  hotWorkEndedAt: string | null;
  controlRoomAckAt: string | null;
  rejectionReason: string | null;
  stateBeforeExpiry: PermitState | null;
  expiredFlag: boolean;
  createdAt: string;
  updatedAt: string;
  actions: PermitAction[];
  timeline: PermitTimelineEvent[];
  signatures: PermitSignature[];
  nextGasTestDue: string | null;
}

export const permitKey = (id: string) => ['permits', 'detail', id] as const;

export const getPermitQueryOptions = (id: string) =>
  queryOptions({
    queryKey: permitKey(id),
    queryFn: () => api.get<PermitDetail>(`/api/permits/${encodeURIComponent(id)}`),
  });

export const usePermit = (id: string) => useQuery(getPermitQueryOptions(id));
