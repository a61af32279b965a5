import { describe, expect, it } from 'vitest';
import { addMinutes, subMinutes } from 'date-fns';
import { dueTimes, nextDue, nextGasTestDue, type DueFacts } from '@shared/permit/due-times';

// Time is injected: every case builds its own "now", nothing reads the system clock.
const now = new Date('2026-12-02T15:00:00Z');

function facts(over: Partial<DueFacts> = {}): DueFacts {
  return {
    state: 'live',
    kinds: ['hot_work'],
    liveSince: subMinutes(now, 90),
    gas: { lastPassAt: subMinutes(now, 10), intervalMinutes: 30 },
    vent: { lastAt: null, intervalMinutes: 60, open: 1 },
    plug: { lastAt: null, intervalMinutes: 60, inPlace: 1 },
    fireWatch: { hotWorkEndedAt: null, minutes: 60, lastCheckAt: null },
    ...over,
  };
}
const of = (f: DueFacts, kind: string, at = now) => dueTimes(f, at).find((t) => t.kind === kind)!;

describe('nextGasTestDue (the one rule behind the permit page, the permits list and the board)', () => {
  it('when the permit is live, then the next test is due the interval after the last pass', () => {
    expect(nextGasTestDue('live', subMinutes(now, 10), 30, now)).toEqual(addMinutes(now, 20));
  });
  it('when the permit is not live, then nothing is due', () => {
    for (const state of ['isolated', 'suspended', 'work_complete'] as const) expect(nextGasTestDue(state, subMinutes(now, 10), 30, now)).toBeNull();
  });
  it('when a live permit has no passing test, then it is due now', () => {
    expect(nextGasTestDue('live', null, 30, now)).toEqual(now);
  });
});

describe('dueTimes', () => {
  it('when the last pass is 29 minutes old on a 30-minute interval, then the gas test is due in a minute and not overdue', () => {
    const t = of(facts({ gas: { lastPassAt: subMinutes(now, 29), intervalMinutes: 30 } }), 'gas_test');
    expect(t.dueAt).toEqual(addMinutes(now, 1));
    expect(t.overdue).toBe(false);
    expect(t.minutesOverdue).toBe(0);
  });

  it('when exactly the interval has passed, then it is due now but not yet overdue; a minute later it is 1 minute overdue', () => {
    const f = facts({ gas: { lastPassAt: subMinutes(now, 30), intervalMinutes: 30 } });
    expect(of(f, 'gas_test').overdue).toBe(false);
    const later = of(f, 'gas_test', addMinutes(now, 1));
    expect(later.overdue).toBe(true);
    expect(later.minutesOverdue).toBe(1);
  });

  it('when a live permit has no passing test, then it is overdue since work started (a fixed time, one occurrence)', () => {
    const t = of(facts({ gas: { lastPassAt: null, intervalMinutes: 30 } }), 'gas_test');
    expect(t.dueAt).toEqual(subMinutes(now, 90));
    expect(t.overdue).toBe(true);
  });

  it('when no vent check has been recorded, then the first is due the interval after work started', () => {
    expect(of(facts(), 'vent').dueAt).toEqual(subMinutes(now, 30));
    expect(of(facts(), 'vent').overdue).toBe(true);
    expect(of(facts({ vent: { lastAt: subMinutes(now, 5), intervalMinutes: 60, open: 1 } }), 'vent').dueAt).toEqual(addMinutes(now, 55));
  });

  it('when the permit holds no vent or plug in place, then no vent or plug check is due', () => {
    const f = facts({ vent: { lastAt: null, intervalMinutes: 60, open: 0 }, plug: { lastAt: null, intervalMinutes: 60, inPlace: 0 } });
    expect(of(f, 'vent').dueAt).toBeNull();
    expect(of(f, 'plug').dueAt).toBeNull();
  });

  it('finding 16.6: when the permit is suspended, then no repeat gas test is due (work has stopped), but vent and plug checks still are while the isolations are in place (common practice, no published source)', () => {
    const f = facts({ state: 'suspended' });
    expect(of(f, 'gas_test').dueAt).toBeNull();
    for (const kind of ['vent', 'plug']) expect(of(f, kind).dueAt).not.toBeNull();
  });

  it('finding 16.6: when the isolations are signed in place and work has not started, then vent and plug checks count from the signature; before that nothing is due', () => {
    const signed = subMinutes(now, 20);
    for (const kind of ['vent', 'plug']) expect(of(facts({ state: 'isolated', liveSince: null, isolatedSince: signed }), kind).dueAt).toEqual(addMinutes(signed, 60));
    for (const kind of ['vent', 'plug']) expect(of(facts({ state: 'accepted', liveSince: null }), kind).dueAt).toBeNull();
  });

  it('when hot work stopped 30 minutes ago with a 60-minute watch, then the closing check is due in 30 minutes (NFPA 51B 2019: 1 hour)', () => {
    const t = of(facts({ fireWatch: { hotWorkEndedAt: subMinutes(now, 30), minutes: 60, lastCheckAt: null } }), 'fire_watch');
    expect(t.dueAt).toEqual(addMinutes(now, 30));
    expect(t.overdue).toBe(false);
  });

  it('when a permit stores a watch shorter than 30 minutes, then the watch is held at 30 (OSHA 29 CFR 1910.252(a)(2)(iii)(B))', () => {
    const t = of(facts({ fireWatch: { hotWorkEndedAt: subMinutes(now, 10), minutes: 15, lastCheckAt: null } }), 'fire_watch');
    expect(t.dueAt).toEqual(addMinutes(now, 20));
  });

  it('when the closing check is recorded after the watch ends, then nothing more is due; a check during the watch does not close it', () => {
    const ended = subMinutes(now, 70);
    expect(of(facts({ fireWatch: { hotWorkEndedAt: ended, minutes: 60, lastCheckAt: subMinutes(now, 5) } }), 'fire_watch').dueAt).toBeNull();
    const during = of(facts({ fireWatch: { hotWorkEndedAt: ended, minutes: 60, lastCheckAt: subMinutes(now, 30) } }), 'fire_watch');
    expect(during.overdue).toBe(true);
    expect(during.minutesOverdue).toBe(10);
  });

  it('when the permit has no hot work, then there is no fire watch', () => {
    expect(of(facts({ kinds: ['cold_work'], fireWatch: { hotWorkEndedAt: subMinutes(now, 5), minutes: 60, lastCheckAt: null } }), 'fire_watch').dueAt).toBeNull();
  });

  it('when several checks are due, then nextDue is the earliest', () => {
    const times = dueTimes(facts({ vent: { lastAt: subMinutes(now, 59), intervalMinutes: 60, open: 1 }, plug: { lastAt: now, intervalMinutes: 60, inPlace: 1 } }), now);
    expect(nextDue(times)?.kind).toBe('vent');
    expect(nextDue(dueTimes(facts({ state: 'closed' }), now))).toBeNull();
  });
});
