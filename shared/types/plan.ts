import type { PermitState } from '../permit/states';

/** One permit on the week-ahead timeline, as GET /api/plan answers. */
export interface PlanPermit<T = string> {
  id: string;
  number: string;
  title: string;
  state: PermitState;
  pipelineId: string;
  pipelineName: string;
  contractorId: string;
  contractorName: string;
  fromPosition: number;
  toPosition: number;
  validFrom: T;
  validTo: T;
  /** Sent for approval and not yet approved or rejected. */
  awaitingApproval: boolean;
  /** How many other permits' work ranges overlap this one's at the same time. */
  workOverlaps: number;
  /** How many other permits plan an isolation on one of this permit's points at the same time. */
  sharedPoints: number;
}

export interface PlanPermitRef {
  id: string;
  number: string;
  title: string;
  contractorName: string;
}

/**
 * Two permits that meet: their work ranges overlap on one pipeline, or both isolate the same point,
 * while both validity windows are open.
 */
export interface PlanOverlap<T = string> {
  kind: 'work_range' | 'shared_point';
  first: PlanPermitRef;
  second: PlanPermitRef;
  pipelineId: string;
  pipelineName: string;
  /** Where they meet along the line: the shared stretch, or the point's position. */
  fromPosition: number;
  toPosition: number;
  /** The shared point's label (shared_point only). */
  pointLabel: string | null;
  /** When both windows are open. */
  from: T;
  to: T;
}

export interface PlanOption {
  id: string;
  name: string;
}

export interface PlanAnswer<T = string> {
  from: T;
  to: T;
  timeZone: string;
  permits: PlanPermit<T>[];
  /** Permits in the window beyond those listed (the list stops at planPermitLimit). */
  more: number;
  /**
   * Where permits meet: for each listed permit, its meetings with the first `planOverlapsPerPermit`
   * other permits it meets (by number), at most a few thousand in all.
   */
  overlaps: PlanOverlap<T>[];
  /** Meetings beyond those in `overlaps` (a permit meeting many others, or the list's limit). */
  overlapsMore: number;
  pipelines: PlanOption[];
  contractors: PlanOption[];
  generatedAt: T;
}
