import type { SuspendedByKind } from '../permit/suspension';
import type { PermitState } from '../permit/states';
import type { StepKind } from '../isolations/step-kinds';

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

/**
 * Permits by state over time: at the end of each site day (30-day period) or each site week (90 and
 * 365 days), how many of the tenant's permits stood in each state, read from the audit trail's state
 * changes. States with no permit are left out of `counts`.
 */
export interface StatesOverTimeRow {
  /** "YYYY-MM-DD": the last site day of the bucket; counts are as at the end of that day. */
  day: string;
  counts: Partial<Record<PermitState, number>>;
}

/** What is timed: a repeat gas test, or a vent, plug or fire-watch check. */
export const timelinessKinds = ['gas_test', 'vent', 'plug', 'fire_watch'] as const;
export type TimelinessKind = (typeof timelinessKinds)[number];
export const timelinessKindLabels: Record<TimelinessKind, string> = {
  gas_test: 'Repeat gas tests',
  vent: 'Vent checks',
  plug: 'Plug checks',
  fire_watch: 'Fire-watch checks',
};

/**
 * Timed records in the period that fell due: done by their due time (on time), done after it (late),
 * or never done while the work stood (missed).
 */
export interface TimelinessRow {
  kind: TimelinessKind;
  onTime: number;
  late: number;
  missed: number;
}

/** How long isolations now in place have stood, in site days since they were applied. */
export const isolationAgeBands = ['under_1_day', 'days_1_to_7', 'days_8_to_30', 'days_31_to_90', 'over_90_days'] as const;
export type IsolationAgeBand = (typeof isolationAgeBands)[number];
export const isolationAgeBandLabels: Record<IsolationAgeBand, string> = {
  under_1_day: 'Under a day',
  days_1_to_7: '1 to 7 days',
  days_8_to_30: '8 to 30 days',
  days_31_to_90: '31 to 90 days',
  over_90_days: 'Over 90 days',
};

export interface IsolationAgeRow {
  band: IsolationAgeBand;
  /** Isolations in place now, by the kind of step (valve, vent, drain, plug, blind …); kinds with none left out. */
  byKind: Partial<Record<StepKind, number>>;
  total: number;
}

export interface ReportsOverview<T = string> {
  days: number;
  since: T;
  timeZone: string;
  stageTimes: StageTimeRow[];
  suspensionsByCause: SuspensionCauseRow[];
  qualificationsExpiring: ExpiringQualificationRow[];
  statesOverTime: StatesOverTimeRow[];
  timeliness: TimelinessRow[];
  isolationsByAge: IsolationAgeRow[];
  generatedAt: T;
}
