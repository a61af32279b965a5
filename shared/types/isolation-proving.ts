import type { GaugeUnit } from '../calc/pressure';
import type { DeadEnds, IsolationReadiness } from '../isolations/readiness';
import type { Moment } from './moment';

/** One hold test of the isolated section, as the isolation API answers it. */
export interface IsolationProving<Time extends Moment = string> {
  id: string;
  permitId: string;
  stepId: string;
  /** The vent or drain the gauge was read at. */
  at: string;
  unit: GaugeUnit;
  /** The site's limit and hold time when the test started. */
  maxPressure: number;
  maxPressureUnit: GaugeUnit;
  holdMinutes: number;
  startReading: number;
  startedAt: Time;
  startedBy: string;
  startedByName: string;
  startedEnteredLate: boolean;
  endReading: number | null;
  endedAt: Time | null;
  endedBy: string | null;
  endedByName: string | null;
  endedEnteredLate: boolean;
  result: 'running' | 'proved' | 'failed';
  failure: string | null;
  notes: string | null;
}

/** Where the plan stands against Isolated, beside the steps in GET /api/permits/:id/isolations. */
export interface IsolationPlanReadiness<Time extends Moment = string> extends IsolationReadiness {
  deadEnds: DeadEnds;
  provings: IsolationProving<Time>[];
  /** The site's proving rule, for a new test. */
  limits: { maxPressure: number; unit: GaugeUnit; holdMinutes: number };
  /** The authoriser's "isolations in place" signature, once given. */
  signature: { name: string; at: Time } | null;
  /** Everything that still keeps the permit from Isolated, in words; empty once it is isolated. */
  blockers: string[];
}
