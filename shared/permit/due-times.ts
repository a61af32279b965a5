/**
 * When each timed check of a permit is next due, and whether it is overdue: one pure function for
 * the API responses, the scheduler and the screens, so every place says the same thing.
 *
 * - Gas test: repeat tests during live work, due `intervalMinutes` after the last passing test
 *   (`nextGasTestDue`, also behind the permit page, the permits list and the board). A live permit
 *   with no passing test at all is due since work started (or now) and counts as overdue.
 * - Vent and plug checks: whenever the isolations are signed in place (isolated, live, suspended)
 *   while the permit holds a vent open / a plug in place, due `intervalMinutes` after the last check
 *   of that kind, or after work last started (else the isolations were signed) when there is none
 *   yet. Common practice, no published source for the interval (tenant settings).
 * - Fire watch: after hot work stops, a closing check is due when the watch may end
 *   (fireWatchEnd: NFPA 51B (2019) 60 min default, never below OSHA 29 CFR 1910.252(a)(2)(iii)(B)
 *   30 min). Once a fire-watch check is recorded at or after that time nothing more is due.
 */
import { addMinutes, differenceInMinutes } from 'date-fns';
import { FIRE_WATCH_MAX_MINUTES, FIRE_WATCH_MIN_MINUTES, fireWatchEnd } from '../calc/fire-watch';
import { isolationCheckStates, liveStates, workUnderWayStates, type PermitState, type WorkKind } from './states';

export const timedCheckKinds = ['gas_test', 'vent', 'plug', 'fire_watch'] as const;
export type TimedCheckKind = (typeof timedCheckKinds)[number];

export const timedCheckLabels: Record<TimedCheckKind, string> = {
  gas_test: 'Repeat gas test',
  vent: 'Vent check',
  plug: 'Plug check',
  fire_watch: 'Fire watch closing check',
};

export interface DueFacts {
  state: PermitState;
  kinds: readonly WorkKind[];
  /** When work last started or resumed; null if the permit has never been live. */
  liveSince: Date | null;
  /** When the isolations were last signed in place; null if never (vent and plug checks count from it before work starts). */
  isolatedSince?: Date | null;
  gas: { lastPassAt: Date | null; intervalMinutes: number };
  vent: { lastAt: Date | null; intervalMinutes: number; open: number };
  plug: { lastAt: Date | null; intervalMinutes: number; inPlace: number };
  fireWatch: { hotWorkEndedAt: Date | null; minutes: number; lastCheckAt: Date | null };
}

export interface DueTime {
  kind: TimedCheckKind;
  /** Null when nothing of this kind is due on the permit now. */
  dueAt: Date | null;
  overdue: boolean;
  /** Whole minutes past due (0 when not overdue). */
  minutesOverdue: number;
}

const none = (kind: TimedCheckKind): DueTime => ({ kind, dueAt: null, overdue: false, minutesOverdue: 0 });

function due(kind: TimedCheckKind, dueAt: Date, now: Date, forceOverdue = false): DueTime {
  const overdue = forceOverdue || dueAt.getTime() < now.getTime();
  return { kind, dueAt, overdue, minutesOverdue: overdue ? Math.max(0, differenceInMinutes(now, dueAt)) : 0 };
}

/**
 * The next repeat gas test of a live permit (null otherwise): `intervalMinutes` after the last
 * passing test. With no passing test at all it is due since work started when that is known (a
 * fixed time, so one missed test is one overdue occurrence), else now. The permit page, the permits
 * list, the board (its SQL takes `liveStates` as a parameter) and the due-time rules all use this.
 */
export function nextGasTestDue(state: PermitState, lastPassAt: Date | null, intervalMinutes: number, now: Date, liveSince: Date | null = null): Date | null {
  if (!liveStates.includes(state)) return null;
  return lastPassAt ? addMinutes(lastPassAt, intervalMinutes) : (liveSince ?? now);
}

function periodic(kind: 'vent' | 'plug', f: DueFacts, now: Date): DueTime {
  const facts = kind === 'vent' ? { ...f.vent, count: f.vent.open } : { ...f.plug, count: f.plug.inPlace };
  if (!isolationCheckStates.includes(f.state) || facts.count === 0) return none(kind);
  const base = facts.lastAt ?? f.liveSince ?? f.isolatedSince ?? now;
  return due(kind, addMinutes(base, facts.intervalMinutes), now);
}

function fireWatch(f: DueFacts, now: Date): DueTime {
  const { hotWorkEndedAt, minutes, lastCheckAt } = f.fireWatch;
  if (!f.kinds.includes('hot_work') || !hotWorkEndedAt || !workUnderWayStates.includes(f.state)) return none('fire_watch');
  // The permit's own length, held inside the range fireWatchEnd accepts so a stored oddity never stops the scheduler.
  const end = fireWatchEnd(hotWorkEndedAt, Math.min(FIRE_WATCH_MAX_MINUTES, Math.max(FIRE_WATCH_MIN_MINUTES, Math.round(minutes))));
  if (lastCheckAt && lastCheckAt.getTime() >= end.getTime()) return none('fire_watch');
  return due('fire_watch', end, now);
}

/** Every timed check of the permit, in a fixed order. */
export function dueTimes(f: DueFacts, now: Date): DueTime[] {
  // No passing test at all on a live permit counts as overdue from the start.
  const gasDue = nextGasTestDue(f.state, f.gas.lastPassAt, f.gas.intervalMinutes, now, f.liveSince);
  const gas = gasDue ? due('gas_test', gasDue, now, f.gas.lastPassAt === null) : none('gas_test');
  return [gas, periodic('vent', f, now), periodic('plug', f, now), fireWatch(f, now)];
}

/** The earliest due time across all kinds, for "next due" in lists. */
export function nextDue(times: DueTime[]): DueTime | null {
  const pending = times.filter((t) => t.dueAt);
  if (!pending.length) return null;
  return pending.reduce((a, b) => (a.dueAt!.getTime() <= b.dueAt!.getTime() ? a : b));
}
