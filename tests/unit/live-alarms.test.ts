// Live alarms (issue 18): which audit events raise an alarm, and the words a site worker reads.
import { describe, expect, it } from 'vitest';
import { alarmKindOf, alarmWords } from '@shared/live/alarms';
import type { LiveEvent } from '@shared/types/live';
import { permitIdsIn } from '@client/lib/live/permit-ids';

const base: LiveEvent = {
  seq: 41,
  permits: [{ id: 'p1', number: 'PW-2026-0007' }],
  action: 'suspend',
  fromState: 'live',
  toState: 'suspended',
  actorName: 'Jo Hartnell',
  reason: 'Pressure rising behind the upstream valve',
  // 14:05 in London in December (GMT).
  occurredAt: '2026-12-03T14:05:00.000Z',
  facts: { suspendedBy: 'control_room' },
  alarm: 'suspended',
};

describe('which changes are alarms', () => {
  it('finding 18.7: when work is stopped by anyone, a gas test fails, a repeat gas test is overdue or a long-term isolation fails its re-check, then it is an alarm; an ordinary change or a passing test is not', () => {
    expect(alarmKindOf(base)).toBe('suspended');
    expect(alarmKindOf({ ...base, facts: { suspendedBy: 'system' } })).toBe('suspended');
    expect(alarmKindOf({ action: 'gas_test_recorded', fromState: null, toState: null, facts: { verdict: 'fail' } })).toBe('gas_test_failed');
    expect(alarmKindOf({ action: 'gas_test_recorded', fromState: null, toState: null, facts: { verdict: 'pass' } })).toBeNull();
    expect(alarmKindOf({ action: 'check_overdue', fromState: null, toState: null, facts: { check: 'gas_test' } })).toBe('gas_test_overdue');
    expect(alarmKindOf({ action: 'check_overdue', fromState: null, toState: null, facts: { check: 'vent' } })).toBeNull();
    expect(alarmKindOf({ action: 'certificate_recheck_failed', fromState: null, toState: null, facts: {} })).toBe('certificate_recheck_failed');
    expect(alarmKindOf({ action: 'certificate_recheck_passed', fromState: null, toState: null, facts: {} })).toBeNull();
    expect(alarmKindOf({ action: 'resume', fromState: 'suspended', toState: 'live', facts: {} })).toBeNull();
    expect(alarmKindOf({ action: 'submit', fromState: 'draft', toState: 'requested', facts: {} })).toBeNull();
  });

  it('finding 18.8: when an alarm is shown, then it says what happened, to which permit, when in the site’s zone with the zone named, and what to do, in plain words', () => {
    const words = alarmWords(base, 'Europe/London');
    expect(words.headline).toBe('Stop work. Permit PW-2026-0007 was suspended by the control room at 3 Dec, 14:05 GMT (Europe/London).');
    expect(words.detail).toBe('Pressure rising behind the upstream valve.');
    expect(words.todo).toMatch(/keep it stopped/);
    // The same instant on a Texas site reads in its own zone.
    expect(alarmWords(base, 'America/Chicago').headline).toContain('at 3 Dec, 08:05 CST (America/Chicago)');
    expect(alarmWords({ ...base, facts: { suspendedBy: 'system' } }, 'Europe/London').headline).toContain('suspended by Holdpoint at');

    const gas = alarmWords({ ...base, action: 'gas_test_recorded', fromState: null, toState: null, alarm: 'gas_test_failed', reason: 'Flammable 14 %LEL, above the limit of 0 %LEL', facts: { verdict: 'fail', place: 'work_area' } }, 'Europe/London');
    expect(gas.headline).toBe('Stop work. A gas test failed on permit PW-2026-0007 at 3 Dec, 14:05 GMT (Europe/London).');
    expect(gas.detail).toBe('Work area: Flammable 14 %LEL, above the limit of 0 %LEL.');

    const overdue = alarmWords({ ...base, action: 'check_overdue', alarm: 'gas_test_overdue', reason: null, facts: { check: 'gas_test', dueAt: '2026-12-03T13:30:00.000Z' } }, 'Europe/London');
    expect(overdue.headline).toBe('Repeat gas test overdue on permit PW-2026-0007: it was due at 3 Dec, 13:30 GMT (Europe/London).');

    const cert = alarmWords(
      { ...base, action: 'certificate_recheck_failed', alarm: 'certificate_recheck_failed', reason: 'a lock or tag is missing or damaged', permits: [...base.permits, { id: 'p2', number: 'PW-2026-0009' }], facts: { certificateNumber: 'IC-2026-0003' } },
      'Europe/London',
    );
    expect(cert.headline).toBe('Stop work. Long-term isolation IC-2026-0003 failed its re-check at 3 Dec, 14:05 GMT (Europe/London).');
    expect(cert.detail).toBe('A lock or tag is missing or damaged. Permits PW-2026-0007 and PW-2026-0009 work under it.');
    for (const w of [words, gas, overdue, cert]) expect(`${w.headline} ${w.detail ?? ''} ${w.todo}`).not.toMatch(/_|T\d{2}:\d{2}:\d{2}|undefined|null/);
  });

  it('finding 18.9: when "My work" lists permits in several roles’ lists, then every permit it names is followed once', () => {
    const permit = (id: string) => ({ permit: { id, number: id } });
    const work = { lead: { toAccept: [permit('a')], liveWork: [permit('b'), permit('a')] }, technician: null, gasTester: { gasTestsDue: [{ ...permit('c'), dueAt: 'x' }] }, counts: { toAccept: 1 } };
    expect(permitIdsIn(work)).toEqual(['a', 'b', 'c']);
    expect(permitIdsIn(undefined)).toEqual([]);
  });
});
