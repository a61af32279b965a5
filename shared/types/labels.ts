/** What a scanned lock or tag label opens: the lock or tag, and where it is now. */
import type { InventoryKind } from '../assets/inventory-state';
import type { InventoryState, LocationUnit } from '../schemas/assets.schema';
import type { StepKind } from '../schemas/isolation.schema';
import type { PermitState } from '../permit/states';
import type { Moment } from './moment';

export interface ScanPermit {
  id: string;
  number: string;
  title: string;
  state: PermitState;
}

export interface ScanStep<M extends Moment = string> {
  id: string;
  status: 'applied' | 'verified';
  kind: StepKind;
  appliedByName: string | null;
  appliedAt: M | null;
}

/** The isolation a lock or tag is on now. The step and permit only for someone who may read that permit. */
export interface ScanPlacement<M extends Moment = string> {
  pointId: string | null;
  /** The point's painted code, or the temporary label of a point not in the register. */
  pointLabel: string;
  pointDescription: string | null;
  pipelineName: string;
  position: number;
  unit: LocationUnit;
  step: ScanStep<M> | null;
  permit: ScanPermit | null;
}

export interface ScanResult<M extends Moment = string> {
  kind: InventoryKind;
  id: string;
  number: string;
  state: InventoryState;
  holderName: string | null;
  /** Null when the lock or tag is on no isolation. */
  placement: ScanPlacement<M> | null;
}
