// The permit lifecycle as a pure function: every (state, event) pair, then every guard's refusal.
// The expected table below is written out by hand on purpose, so a change to the machine's table
// has to be made twice, deliberately. Rules named beside the checks are common practice for permit
// to work and isolation (no single published source), except where a source is named.
import { describe, expect, it } from 'vitest';
import { decide, eventAction, eventsFrom, permitEventLabels, permitEvents, signedEvents, systemEvents, targetOf, type ActorFacts, type PermitEvent, type PermitFacts } from '@shared/permit/state-machine';
import { holdsIsolations, permitStates, type PermitState } from '@shared/permit/states';
import type { IsolationReadiness } from '@shared/isolations/readiness';

const NOW = new Date('2026-03-02T14:00:00Z');
const at = (minutes: number) => new Date(NOW.getTime() + minutes * 60_000);

const ORG = 'org-oxbow';
const people = { requester: 'u-requester', authoriser: 'u-authoriser', lead: 'u-lead', otherLead: 'u-lead-2' };

type FactsOverrides = Partial<Omit<PermitFacts, 'isolation' | 'gas'>> & { isolation?: Partial<PermitFacts['isolation']>; gas?: Partial<PermitFacts['gas']> };

/** A block valve each side of the work, both verified, and the section held dead at a vent (HSE HSG253). */
const proved: IsolationReadiness = {
  devices: 2,
  sides: [
    { side: 'upstream', deadEnd: null, planned: 1, verified: 1 },
    { side: 'downstream', deadEnd: null, planned: 1, verified: 1 },
  ],
  proving: { state: 'proved', at: 'CR-VT-150', failure: null },
};
const planned: IsolationReadiness = { ...proved, sides: proved.sides.map((s) => ({ ...s, verified: 0 })), proving: { state: 'none', at: null, failure: null } };

/**
 * Facts that satisfy every guard of every event from `state`: isolations in place while the state holds
 * them (all applied and verified by a second person), removed afterwards; a passing gas test 10 minutes
 * old; the window open; checklist and walk-down done; the fire watch over.
 */
function facts(state: PermitState, o: FactsOverrides = {}): PermitFacts {
  // Work complete is when isolations come off: its one event (return to service) needs them removed.
  const inPlace = holdsIsolations.includes(state) && state !== 'work_complete';
  const base: PermitFacts = {
    state,
    kinds: ['hot_work'],
    requesterUserId: people.requester,
    contractorOrganisationId: ORG,
    contractorLeadUserId: people.lead,
    validFrom: at(-60),
    validTo: at(8 * 60),
    stateBeforeExpiry: state === 'expired' ? 'accepted' : null,
    checklist: [
      { key: 'extinguisher_ready', label: 'Fire extinguisher at the work site', required: true, confirmed: true },
      { key: 'site_photo', label: 'Photo of the site before work', required: false, confirmed: false },
    ],
    isolation: inPlace
      ? { steps: 8, applied: 8, verified: 8, selfVerified: 0, remoteValvesWithoutAck: 0, stillApplied: 8, ventsOpen: 2, plugsInPlace: 2, plugWarningsUnacknowledged: 0, readiness: proved }
      : { steps: 8, applied: 0, verified: 0, selfVerified: 0, remoteValvesWithoutAck: 0, stillApplied: 0, ventsOpen: 0, plugsInPlace: 0, plugWarningsUnacknowledged: 0, readiness: planned },
    gas: { lastPassAt: at(-10), lastFailAt: null, windowMinutes: 30 },
    fireWatchEndsAt: at(-5),
    walkdownComplete: true,
    controlRoomAcknowledged: true,
    conflicts: [],
    hasExpiredFlag: state === 'suspended',
    // The lead stopped the work: the lead or an authoriser may restart it (issue 17).
    suspendedByKind: state === 'suspended' ? 'lead' : null,
  };
  return { ...base, ...o, isolation: { ...base.isolation, ...o.isolation }, gas: { ...base.gas, ...o.gas } };
}

const authoriser: ActorFacts = { userId: people.authoriser, organisationIds: ['org-operator'], roles: ['authoriser'], qualifications: [] };
const lead: ActorFacts = { userId: people.lead, organisationIds: [ORG], roles: ['contractor_lead'], qualifications: ['hot_work_holder', 'cold_work_holder'] };
const system: ActorFacts = { userId: '', organisationIds: [], roles: [], qualifications: [], isSystem: true };
const controlRoom: ActorFacts = { userId: 'u-control', organisationIds: ['org-operator'], roles: ['control_room'], qualifications: [] };
/** Who fires each event in the table walk: the lead accepts and hands back, the control room acknowledges, Holdpoint expires, the authoriser does the rest. */
const actorFor = (event: PermitEvent) =>
  event === 'accept' || event === 'hand_back' ? lead : event === 'expire' ? system : event === 'acknowledge_return' ? controlRoom : authoriser;
const input = { reason: 'High wind forecast this afternoon' };

const refused = (r: ReturnType<typeof decide>) => {
  expect(r.ok, JSON.stringify(r)).toBe(false);
  return r.ok ? [] : r.reasons;
};

// ---------------------------------------------------------------------------------------------------
// Every (state, event) pair
// ---------------------------------------------------------------------------------------------------
const expected: Record<string, PermitState> = {
  'draft/submit': 'requested',
  'requested/reject': 'draft',
  'requested/approve': 'approved',
  'approved/accept': 'accepted',
  'accepted/confirm_isolated': 'isolated',
  'isolated/start_work': 'live',
  'live/suspend': 'suspended',
  'suspended/resume': 'live',
  'live/hand_back': 'work_complete',
  'suspended/hand_back': 'work_complete',
  'work_complete/return_to_service': 'returned_to_service',
  'returned_to_service/acknowledge_return': 'returned_to_service',
  'returned_to_service/close': 'closed',
  'draft/cancel': 'cancelled',
  'requested/cancel': 'cancelled',
  'approved/cancel': 'cancelled',
  'accepted/cancel': 'cancelled',
  'isolated/cancel': 'cancelled',
  'expired/cancel': 'cancelled',
  'approved/expire': 'expired',
  'accepted/expire': 'expired',
  'isolated/expire': 'expired',
  // A live permit whose time runs out stops work but stays open.
  'live/expire': 'suspended',
  // An expired permit returns to where it was (here: accepted); a suspended one stays suspended.
  'expired/revalidate': 'accepted',
  'suspended/revalidate': 'suspended',
};

const pairs = permitStates.flatMap((state) => permitEvents.map((event) => [state, event, expected[`${state}/${event}`]] as const));

describe('every (state, event) pair', () => {
  it('covers all 12 states × 15 events', () => {
    expect(pairs).toHaveLength(permitStates.length * permitEvents.length);
    expect(pairs.filter(([, , to]) => to)).toHaveLength(Object.keys(expected).length);
  });

  it.each(pairs.filter(([, , to]) => to))('when a %s permit gets "%s" with every guard met, then it becomes %s', (state, event, to) => {
    expect(decide(event, facts(state), actorFor(event), NOW, input)).toEqual({ ok: true, to });
  });

  it.each(pairs.filter(([, , to]) => !to))('when a %s permit gets "%s", then it is refused with the reason', (state, event) => {
    const reasons = refused(decide(event, facts(state), actorFor(event), NOW, input));
    expect(reasons).toEqual([`A permit that is ${state.replace(/_/g, ' ')} cannot be sent "${permitEventLabels[event]}".`]);
  });

  it.each(permitStates)('when listing what can happen to a %s permit, then the list matches the table without system events', (state) => {
    const listed = permitEvents.filter((e) => expected[`${state}/${e}`] && !systemEvents.includes(e));
    expect(eventsFrom(state)).toEqual(listed);
    for (const e of permitEvents) if (e !== 'revalidate') expect(targetOf(e, state)).toBe(expected[`${state}/${e}`]);
  });

  it('when an expired permit with no earlier state recorded is re-validated, then it goes back to approved', () => {
    expect(decide('revalidate', facts('expired', { stateBeforeExpiry: null }), authoriser, NOW)).toEqual({ ok: true, to: 'approved' });
  });
});

// ---------------------------------------------------------------------------------------------------
// Each guard's refusal
// ---------------------------------------------------------------------------------------------------
describe('submit', () => {
  it('when the validity window ends before it starts, then it is refused', () => {
    expect(refused(decide('submit', facts('draft', { validFrom: at(60), validTo: at(60) }), lead, NOW))).toEqual(['The validity window must end after it starts.']);
  });
});

describe('approve (two-person rule)', () => {
  it('when the person who requested the permit approves it, then it is refused: someone else must approve', () => {
    const self = { ...authoriser, userId: people.requester };
    expect(refused(decide('approve', facts('requested'), self, NOW))).toEqual(['You requested this permit, so someone else must approve it (two-person rule).']);
  });

  it('when the validity window has already ended, then approval is refused', () => {
    expect(refused(decide('approve', facts('requested', { validTo: at(-1) }), authoriser, NOW))).toEqual(['The validity window has already ended; change it before approving.']);
  });

  it('when the plan would operate points that other permits hold in place, then approval names each point and permit', () => {
    expect(refused(decide('approve', facts('requested', { conflicts: ['CR-VT-196 is held open by PW-2026-0007', 'CR-DR-195 is held open by PW-2026-0011'] }), authoriser, NOW))).toEqual([
      'The plan would operate points another permit holds in place: CR-VT-196 is held open by PW-2026-0007; CR-DR-195 is held open by PW-2026-0011.',
    ]);
  });

  it('when everything is wrong at once, then every reason is given, not just the first', () => {
    const self = { ...authoriser, userId: people.requester };
    expect(refused(decide('approve', facts('requested', { validTo: at(-1), validFrom: at(-120), conflicts: ['CR-VT-196 is held open by PW-2026-0007'] }), self, NOW))).toHaveLength(3);
  });
});

describe('accept (the right contractor lead, qualified)', () => {
  it('when the authoriser tries to accept, then only a contractor lead of the named organisation may', () => {
    expect(refused(decide('accept', facts('approved'), authoriser, NOW))).toContain('Only a contractor lead of the named contractor organisation can accept this permit.');
  });

  it('when a contractor lead of another organisation accepts, then it is refused', () => {
    const stranger = { ...lead, userId: 'u-elsewhere', organisationIds: ['org-elsewhere'] };
    expect(refused(decide('accept', facts('approved', { contractorLeadUserId: null }), stranger, NOW))).toEqual(['Only a contractor lead of the named contractor organisation can accept this permit.']);
  });

  it('when the permit names another lead of the same organisation, then it is refused', () => {
    const colleague = { ...lead, userId: people.otherLead };
    expect(refused(decide('accept', facts('approved'), colleague, NOW))).toEqual(['This permit names another contractor lead.']);
  });

  it('when no lead is named, then any qualified lead of the organisation may accept', () => {
    expect(decide('accept', facts('approved', { contractorLeadUserId: null }), { ...lead, userId: people.otherLead }, NOW)).toEqual({ ok: true, to: 'accepted' });
  });

  it('when the lead lacks the qualification for one kind of work, then the missing qualification is named', () => {
    expect(refused(decide('accept', facts('approved', { kinds: ['hot_work', 'confined_space'] }), lead, NOW))).toEqual(['You need an in-date qualification for: confined space entry.']);
    expect(refused(decide('accept', facts('approved'), { ...lead, qualifications: [] }, NOW))).toEqual(['You need an in-date qualification for: hot work holder.']);
  });

  it('when the validity window has ended, then acceptance is refused', () => {
    expect(refused(decide('accept', facts('approved', { validTo: at(-1) }), lead, NOW))).toEqual(['The validity window has already ended.']);
  });
});

describe('confirm_isolated', () => {
  it('when the plan has no steps, then it is refused', () => {
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { steps: 0, applied: 0, verified: 0 } }), system, NOW))).toEqual(['The isolation plan has no steps.']);
  });

  it('when some steps are not verified by a second person, then it says how many', () => {
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { verified: 5 } }), system, NOW))).toEqual([
      '3 of 8 isolation step(s) are not yet applied and verified by a second person.',
    ]);
  });

  it('when a step was verified by the person who applied it, then it does not count', () => {
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { verified: 7, selfVerified: 1 } }), system, NOW))).toEqual([
      '1 of 8 isolation step(s) are not yet applied and verified by a second person.',
      '1 step(s) were verified by the person who applied them; someone else must verify.',
    ]);
  });

  it('when a remotely operable valve lacks the control room’s acknowledgement, then it is refused', () => {
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { remoteValvesWithoutAck: 1 } }), system, NOW))).toEqual([
      "1 remotely operable valve(s) lack the control room's acknowledgement that remote operation is inhibited.",
    ]);
  });

  // OSHA 29 CFR 1910.147(b): vents, drains and mud plugs are no energy-isolating devices.
  it('finding J1: when the plan is vents and mud plugs only, then it can never be isolated, even with both sides declared dead ends', () => {
    const noDevice: IsolationReadiness = { ...proved, devices: 0, sides: proved.sides.map((s) => ({ ...s, planned: 0, verified: 0, deadEnd: 'Capped' })) };
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { readiness: noDevice } }), authoriser, NOW))[0]).toMatch(/^The plan has no isolating device\. Vents, drains and mud plugs are not isolations/);
  });

  it('finding J1: when no isolating device stands upstream of the work and no dead end is declared there, then it says so; a declared dead end needs none', () => {
    const open: IsolationReadiness = { ...proved, sides: [{ side: 'upstream', deadEnd: null, planned: 0, verified: 0 }, proved.sides[1]] };
    expect(refused(decide('confirm_isolated', facts('accepted', { isolation: { readiness: open } }), authoriser, NOW))[0]).toMatch(/^No isolating device upstream of the work/);
    const capped: IsolationReadiness = { ...open, sides: [{ ...open.sides[0], deadEnd: 'The line ends at a welded cap at MP 0.' }, proved.sides[1]] };
    expect(decide('confirm_isolated', facts('accepted', { isolation: { readiness: capped } }), authoriser, NOW)).toEqual({ ok: true, to: 'isolated' });
  });

  // HSE HSG253: the isolated section is proved dead before work; a position check does not prove a valve.
  it('finding J4: when the section has not been proved dead, or its hold test is running or failed, then it is refused with what to do', () => {
    const refusedWith = (proving: IsolationReadiness['proving']) => refused(decide('confirm_isolated', facts('accepted', { isolation: { readiness: { ...proved, proving } } }), authoriser, NOW));
    expect(refusedWith({ state: 'none', at: null, failure: null })[0]).toMatch(/^Section not proved dead: /);
    expect(refusedWith({ state: 'running', at: 'CR-VT-150', failure: null })[0]).toMatch(/^Section not proved dead yet: the hold test at CR-VT-150 is running/);
    expect(refusedWith({ state: 'failed', at: 'CR-VT-150', failure: 'the pressure built up from 0 psig to 3 psig' })[0]).toContain('failed (the pressure built up from 0 psig to 3 psig)');
  });

  // HSE HSG250: the permit issuer signs that the isolations are in place before work starts.
  it('finding J5: when the isolations are signed in place, then it is the authoriser’s signature, not Holdpoint counting steps', () => {
    expect(signedEvents).toContain('confirm_isolated');
    expect(eventAction.confirm_isolated).toBe('approve');
  });
});

// Going live and resuming are guarded alike.
describe.each([
  { event: 'start_work' as const, from: 'isolated' as const },
  { event: 'resume' as const, from: 'suspended' as const },
])('$event from $from', ({ event, from }) => {
  const go = (o: FactsOverrides, now = NOW) => decide(event, facts(from, o), lead, now);

  it('when every guard is met, then work goes live', () => {
    expect(go({})).toEqual({ ok: true, to: 'live' });
  });

  it('when isolations are not all verified by someone other than the applier, then it is refused', () => {
    expect(refused(go({ isolation: { verified: 6, selfVerified: 2 } }))).toEqual([
      '2 of 8 isolation step(s) are not yet applied and verified by a second person.',
      '2 step(s) were verified by the person who applied them; someone else must verify.',
    ]);
  });

  it('when the validity window has not opened yet, then it is refused', () => {
    expect(refused(go({ validFrom: at(30) }))).toEqual(['The permit is not valid yet.']);
  });

  it('when the validity window has ended, then the authoriser must re-validate', () => {
    expect(refused(go({ validTo: at(-1) }))).toEqual(['The validity window has ended; the authoriser must re-validate it.']);
  });

  it('when no gas test passed, then it is refused', () => {
    expect(refused(go({ gas: { lastPassAt: null } }))).toEqual(['Record a passing gas test first.']);
  });

  it('when the passing gas test is older than the window, then it says how old', () => {
    expect(refused(go({ gas: { lastPassAt: at(-45) } }))).toEqual(['The last passing gas test is 45 minutes old; a new one is needed within 30 minutes of starting.']);
  });

  it('when the passing gas test is exactly as old as the window, then it still counts', () => {
    expect(go({ gas: { lastPassAt: at(-30) } })).toEqual({ ok: true, to: 'live' });
  });

  it('when the passing gas test is 20 seconds past the window, then it no longer counts (no rounding in the crew’s favour)', () => {
    const reasons = refused(go({ gas: { lastPassAt: new Date(at(-30).getTime() - 20_000) } }));
    expect(reasons).toEqual(['The last passing gas test is 31 minutes old; a new one is needed within 30 minutes of starting.']);
  });

  it('when the latest gas test failed after the last pass, then it is refused', () => {
    expect(refused(go({ gas: { lastPassAt: at(-20), lastFailAt: at(-5) } }))).toEqual(['The latest gas test failed; record a passing test first.']);
  });

  it('when a gas test failed at the same time as the last pass, then it is refused (the unsafe reading wins a tie)', () => {
    expect(refused(go({ gas: { lastPassAt: at(-5), lastFailAt: at(-5) } }))).toEqual(['The latest gas test failed; record a passing test first.']);
  });

  it('when a required checklist item is open, then it is named; an optional one does not block', () => {
    const checklist = [
      { key: 'extinguisher_ready', label: 'Fire extinguisher at the work site', required: true, confirmed: false },
      { key: 'signs_posted', label: 'Warning signs posted', required: true, confirmed: false },
      { key: 'site_photo', label: 'Photo of the site before work', required: false, confirmed: false },
    ];
    expect(refused(go({ checklist }))).toEqual(['Confirm the required checklist items: Fire extinguisher at the work site; Warning signs posted.']);
  });

  it('when plug records have warnings the authoriser has not acknowledged, then it is refused', () => {
    expect(refused(go({ isolation: { plugWarningsUnacknowledged: 1 } }))).toEqual(['1 plug record(s) have warnings the authoriser must acknowledge.']);
  });

  it('when everything is missing at once, then every reason is listed', () => {
    const reasons = refused(
      go({
        validTo: at(-1),
        validFrom: at(-120),
        gas: { lastPassAt: null },
        isolation: { verified: 0, plugWarningsUnacknowledged: 2 },
        checklist: [{ key: 'k', label: 'Crew briefed', required: true, confirmed: false }],
      }),
    );
    expect(reasons).toHaveLength(5);
  });
});

describe('hand_back', () => {
  it('when the fire watch is still running, then it says until when', () => {
    expect(refused(decide('hand_back', facts('live', { fireWatchEndsAt: at(20) }), lead, NOW))).toEqual([
      'The fire watch runs until 2 Mar 2026, 14:20 UTC (20 minutes more).',
    ]);
  });

  it('issue 17: when the fire watch is still running at a site in Texas, then the time is the site clock with its zone, never a machine time', () => {
    expect(refused(decide('hand_back', facts('live', { fireWatchEndsAt: at(20), timeZone: 'America/Chicago' }), lead, NOW))).toEqual([
      'The fire watch runs until 2 Mar 2026, 08:20 CST (20 minutes more).',
    ]);
  });

  it('when hot work was never recorded as stopped, then hand-back waits for that record (the fire watch starts there)', () => {
    // OSHA 29 CFR 1910.252(a)(2)(iii)(A): the fire watch stays at least half an hour after hot work ends.
    expect(refused(decide('hand_back', facts('live', { fireWatchEndsAt: null }), lead, NOW))).toEqual([
      'Record that hot work has stopped; the fire watch must run its full time before hand-back.',
    ]);
  });

  it('when the permit has no hot work, then no fire watch is needed', () => {
    expect(decide('hand_back', facts('live', { kinds: ['cold_work'], fireWatchEndsAt: null }), lead, NOW)).toEqual({ ok: true, to: 'work_complete' });
  });

  it('when the fire watch ended, then a suspended permit can be handed back too', () => {
    expect(decide('hand_back', facts('suspended'), lead, NOW)).toEqual({ ok: true, to: 'work_complete' });
  });
});

describe('return_to_service', () => {
  it('when isolations are still applied, vents open, plugs in and the walk-down is open, then every reason is given', () => {
    const f = facts('work_complete', { isolation: { stillApplied: 3, ventsOpen: 1, plugsInPlace: 2 }, walkdownComplete: false });
    expect(refused(decide('return_to_service', f, authoriser, NOW))).toEqual([
      '3 isolation(s) of this permit are still applied; remove them first.',
      '1 vent(s) are still open.',
      '2 plug(s) are still in place or not recorded as removed or displaced.',
      'Complete the walk-down checklist.',
    ]);
  });

  it.each([
    ['an isolation still applied', { isolation: { stillApplied: 1 } }, '1 isolation(s) of this permit are still applied; remove them first.'],
    ['a vent still open', { isolation: { ventsOpen: 1 } }, '1 vent(s) are still open.'],
    ['a plug still in', { isolation: { plugsInPlace: 1 } }, '1 plug(s) are still in place or not recorded as removed or displaced.'],
    ['the walk-down open', { walkdownComplete: false }, 'Complete the walk-down checklist.'],
  ] as const)('when only %s, then only that reason is given', (_what, o, reason) => {
    expect(refused(decide('return_to_service', facts('work_complete', o as FactsOverrides), authoriser, NOW))).toEqual([reason]);
  });
});

describe('close', () => {
  it('when the control room has not acknowledged the return to service, then the permit cannot close', () => {
    expect(refused(decide('close', facts('returned_to_service', { controlRoomAcknowledged: false }), authoriser, NOW))).toEqual([
      'The control room has not acknowledged the return to service yet.',
    ]);
  });
});

describe('revalidate', () => {
  it('when a permit was suspended for another reason than time running out, then it cannot be re-validated', () => {
    expect(refused(decide('revalidate', facts('suspended', { hasExpiredFlag: false }), authoriser, NOW))).toEqual(['Only a permit suspended because its time ran out can be re-validated.']);
  });

  it('when the new window does not end in the future, then it is refused', () => {
    expect(refused(decide('revalidate', facts('expired', { validTo: NOW }), authoriser, NOW))).toEqual(['Set a new validity window that ends in the future.']);
  });
});

describe('events that need a reason in words, and the system-only event', () => {
  it.each([
    ['reject', 'requested'],
    ['suspend', 'live'],
    ['cancel', 'approved'],
  ] as const)('when "%s" on a %s permit has no reason or a two-letter one, then it is refused', (event, state) => {
    expect(refused(decide(event, facts(state), authoriser, NOW))).toEqual(['Give a reason in words.']);
    expect(refused(decide(event, facts(state), authoriser, NOW, { reason: ' no ' }))).toEqual(['Give a reason in words.']);
  });

  it('when a person (not Holdpoint) fires "expire", then it is refused', () => {
    expect(refused(decide('expire', facts('approved'), authoriser, NOW))).toEqual(['Only Holdpoint itself expires a permit, when its validity window ends.']);
  });
});

// Issue 17, permit authority (HSE HSG250, common practice).
describe('issue 17: authority', () => {
  it('when an authoriser who changed the permit or its plan approves it, then it is refused (four eyes)', () => {
    expect(refused(decide('approve', facts('requested', { editorUserIds: [people.requester, people.authoriser] }), authoriser, NOW))).toEqual([
      'You wrote or changed this permit or its isolation plan, so another authoriser must approve it (four-eyes rule).',
    ]);
    expect(decide('approve', facts('requested', { editorUserIds: [people.requester] }), authoriser, NOW)).toEqual({ ok: true, to: 'approved' });
  });

  it('when anyone but the control room acknowledges the return to service, then it is refused', () => {
    expect(refused(decide('acknowledge_return', facts('returned_to_service'), authoriser, NOW))).toEqual(['Only the control room acknowledges that the line is back in service.']);
  });

  it.each(['control_room', 'authoriser', 'system'] as const)('when the permit was suspended by %s, then the lead cannot resume it and an authoriser needs a reason', (kind) => {
    const f = facts('suspended', { suspendedByKind: kind });
    expect(refused(decide('resume', f, lead, NOW))[0]).toMatch(/^This permit was suspended by .*: only an authoriser can re-validate it and let work resume\.$/);
    expect(refused(decide('resume', f, authoriser, NOW))).toEqual(['Give a reason in words: what was checked before work resumes.']);
    expect(decide('resume', f, authoriser, NOW, { reason: 'Cause found and cleared' })).toEqual({ ok: true, to: 'live' });
  });

  it('when a lead who no longer holds the permit hands it back, then it is refused', () => {
    expect(refused(decide('hand_back', facts('suspended', { holderUserId: people.otherLead }), lead, NOW))).toEqual([
      'Only the lead who holds this permit now can hand it back. After a shift handover, that is the incoming lead.',
    ]);
  });
});
