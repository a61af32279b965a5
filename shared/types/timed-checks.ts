import type { TimedCheckKind } from '../permit/due-times';
import type { PermitState } from '../permit/states';
import type { CheckKind } from '../schemas/timed-checks.schema';
import type { GasTestPlace } from '../schemas/gas-tests.schema';
import type { PermitLimitsView } from './gas-tests';
import type { Moment } from './moment';

// What the checks, handover and regime API answers (`Time`: see ./moment.ts).

/** One row of GET /api/permits/:id/checks. */
export interface CheckRow<Time extends Moment = string> {
  id: string;
  kind: CheckKind;
  checkedAt: Time;
  ok: boolean;
  observation: Record<string, unknown>;
  actionTaken: string | null;
  notes: string | null;
  isolationStepId: string | null;
  stepLabel: string | null;
  recordedByName: string;
  /** Written down more than a few minutes after the check was made. */
  enteredLate: boolean;
}

/** POST /api/permits/:id/checks: the check as recorded, with the permit's state. */
export type RecordedCheck<Time extends Moment = string> = CheckRow<Time> & { permitState: PermitState };

/** One row of GET /api/permits/:id/handovers, and the answer of creating or accepting one. */
export interface HandoverRow<Time extends Moment = string> {
  id: string;
  status: 'pending' | 'accepted' | 'superseded';
  fromUserId: string;
  fromName: string;
  toUserId: string;
  toName: string;
  openPoints: string;
  readingsSummary: string[];
  fromSignedAt: Time;
  acceptedAt: Time | null;
}

/** POST /api/permits/:id/handovers/:handoverId/accept: the handover, with who now holds the permit. */
export type AcceptedHandover<Time extends Moment = string> = HandoverRow<Time> & { holderUserId: string; holderName: string };

export interface DueTimeView {
  kind: TimedCheckKind;
  label: string;
  dueAt: string | null;
  overdue: boolean;
  minutesOverdue: number;
  intervalMinutes: number | null;
}

/** GET /api/permits/:id/regime: what is due on the permit and what it is judged against. */
export interface PermitRegime extends PermitLimitsView {
  permitId: string;
  state: PermitState;
  holder: { userId: string; name: string } | null;
  gasTestWindowMinutes: number;
  gasTestIntervalMinutes: number;
  fireWatchMinutes: number;
  fireWatchEndsAt: string | null;
  tests: { beforeCleaning: string | null; beforeWork: string | null; lastPass: string | null; lastFail: string | null };
  due: DueTimeView[];
  nextDue: DueTimeView | null;
  requireDailyBumpTest: boolean;
  timeZone: string;
  /** The stop-work rules as they stand on this permit (shared/permit/stop-work.ts). */
  stopWork: StopWorkView;
}

/** Gas verdicts per place, unresolved failed checks and what stops work starting or resuming now. */
export interface StopWorkView {
  places: { place: GasTestPlace; label: string; required: boolean; latest: 'pass' | 'fail' | null; lastPassAt: string | null; lastFailAt: string | null }[];
  failedChecks: string[];
  /** Why work may not start or resume now under the stop-work rules; empty when none applies. */
  blockers: string[];
  fireWatchBasis: 'nfpa_51b_2019' | 'osha_half_hour';
  ventOutletLelPct: number;
}
