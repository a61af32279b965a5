import type { PermitState } from '../permit/states';
import type { StepCondition, StepKind } from '../schemas/isolation.schema';

export interface BoardPermitRef {
  id: string;
  number: string;
  state: PermitState;
}

/** One isolation in place now, as GET /api/board answers: written once for the server and the client. */
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
  /** The permit this step belongs to, with its work range (for the envelope on the strip). */
  permit: BoardPermitRef & { fromPosition: number; toPosition: number };
  /** Every permit holding the same point (group lockout). */
  permits: BoardPermitRef[];
  nextGasTestDue: string | null;
}

/** GET /api/board. */
export interface Board {
  items: BoardItem[];
  total: number;
  generatedAt: string;
}
