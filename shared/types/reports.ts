import type { SuspendedByKind } from '../permit/suspension';

export const reportStages = ['request_to_approval', 'approval_to_live', 'live_to_return'] as const;
export type ReportStage = (typeof reportStages)[number];

export const reportStageLabels: Record<ReportStage, string> = {
  request_to_approval: 'Sent for approval to approved',
  approval_to_live: 'Approved to work started',
  live_to_return: 'Work started to returned to service',
};

/**
 * How long one stage took, in hours, over the permits that finished the stage in the period: median
 * and 90th percentile as PostgreSQL's percentile_cont (linear interpolation between the two nearest
 * values). Null when no permit finished the stage.
 */
export interface StageTimeRow {
  stage: ReportStage;
  permits: number;
  medianHours: number | null;
  p90Hours: number | null;
}

export interface SuspensionCauseRow {
  cause: SuspendedByKind;
  suspensions: number;
}

export interface ExpiringQualificationRow {
  kind: string;
  /** Expiring today or within 30 days, in 31–60 days, in 61–90 days (site calendar days). */
  within30: number;
  within60: number;
  within90: number;
}

export interface ReportsOverview<T = string> {
  days: number;
  since: T;
  timeZone: string;
  stageTimes: StageTimeRow[];
  suspensionsByCause: SuspensionCauseRow[];
  qualificationsExpiring: ExpiringQualificationRow[];
  generatedAt: T;
}
