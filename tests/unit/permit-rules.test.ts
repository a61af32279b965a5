import { readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { addMinutes, subMinutes } from 'date-fns';
import {
  beforeIsolatedStates, boardPermitStates, certificateLinkStates, certificateReleaseStates, crewSignOnStates, checklistOpenStates, closedStates, editableStates, finishedStates, holdsIsolations, limitsFixedStates, liveStates, permitStates,
  revalidationStates, suspendedStates, workOpenStates, workUnderWayStates, type PermitState,
} from '@shared/permit/states';
import { eventsFrom, statesFrom, targetOf } from '@shared/permit/state-machine';
import { awaitsAuthoriser, suspendedByKinds } from '@shared/permit/suspension';
import { dueTimes, nextGasTestDue } from '@shared/permit/due-times';
import {
  acknowledgementAction, applyStates, isInPlace, removeStates, stepActionNames, stepActionRefusal, stepActions, stepKindForPoint, takesLock, type StepRecord,
} from '@shared/isolations/step-rules';
import { isolationPointKinds } from '@shared/schemas/assets.schema';
import { stepKinds } from '@shared/schemas/isolation.schema';
import { certificateStates, isCertificateLive } from '@shared/isolations/certificate-states';

// Finding 1 (one source for every rule): the permit and step rules live in shared/ and nowhere else.

const step = (over: Partial<StepRecord> = {}): StepRecord => ({
  kind: 'block_valve', status: 'planned', remotelyOperable: false, remoteAckAt: null, controlRoomAckAppliedAt: null, controlRoomAckRemovedAt: null,
  plugWarnings: [], plugWarningsAckAt: null, ...over,
});
const sameStates = (a: readonly PermitState[], b: readonly PermitState[]) => expect([...new Set(a)].sort()).toEqual([...new Set(b)].sort());

describe('finding 1: the lists of permit states agree with the state machine', () => {
  it('when work is under way, then it can be handed back: the under-way states are exactly those hand-back fires from', () => {
    sameStates(workUnderWayStates, statesFrom('hand_back'));
  });

  it('when work starts or resumes, then the permit is live, and only a live permit can be suspended', () => {
    sameStates(liveStates, [targetOf('start_work', 'isolated')!, targetOf('resume', 'suspended')!]);
    sameStates(liveStates, statesFrom('suspend'));
  });

  it('when isolations go on, then the permit is accepted or isolated: the states confirm-isolated and start-work fire from', () => {
    sameStates(applyStates, [...statesFrom('confirm_isolated'), ...statesFrom('start_work')]);
  });

  it('when a permit holds isolations, then the board shows it; the board adds cancelled permits whose isolations are not off yet', () => {
    sameStates(boardPermitStates, [...holdsIsolations, 'cancelled']);
    for (const s of [...applyStates, ...removeStates, ...crewSignOnStates, ...workOpenStates]) expect(boardPermitStates).toContain(s);
  });

  it('when the walk-down is ticked, then the permit is waiting for return to service; only a draft is edited', () => {
    sameStates(checklistOpenStates.walkdown, statesFrom('return_to_service'));
    sameStates(checklistOpenStates.checklist, workOpenStates);
    sameStates(editableStates, statesFrom('submit'));
  });

  it('when the isolations are not yet signed in place, then the permit is at most accepted (or expired); the signature is confirm-isolated', () => {
    for (const s of statesFrom('confirm_isolated')) expect(beforeIsolatedStates).toContain(s);
    for (const s of beforeIsolatedStates) expect(crewSignOnStates).not.toContain(s);
    expect(beforeIsolatedStates).toContain(statesFrom('revalidate').find((s) => targetOf('revalidate', s) !== s));
  });

  it('when a permit is closed or cancelled, then no event moves it on; it is finished, and its gas limits are fixed', () => {
    for (const s of closedStates) expect(eventsFrom(s), s).toEqual([]);
    for (const s of closedStates) expect(finishedStates).toContain(s);
    for (const s of [...finishedStates, 'expired' as const]) expect(limitsFixedStates).toContain(s);
  });
});

describe('finding 1: the lists the new screens and streams use (my work, live alarms) agree with the state machine', () => {
  it('when work is suspended, then it is the one state work resumes from; re-validation fires from the expired and suspended states', () => {
    sameStates(suspendedStates, statesFrom('resume'));
    sameStates(revalidationStates, statesFrom('revalidate'));
  });

  it('when a permit expired before work, or time ran out, or someone but the lead stopped it, then it waits for the authoriser; a lead\'s own stop does not', () => {
    for (const state of permitStates)
      for (const flag of [false, true])
        for (const kind of [...suspendedByKinds, null]) {
          const waits = state === 'expired' || (state === 'suspended' && (flag || kind !== 'lead'));
          expect(awaitsAuthoriser(state, flag, kind), `${state} ${flag} ${kind}`).toBe(waits);
        }
  });
});

describe('finding 1: one rule for which step actions fit', () => {
  it('when the permit is not accepted or isolated, then applying is refused for the permit state; a step already on is refused for its status', () => {
    for (const state of permitStates) {
      const refusal = stepActionRefusal('apply', step(), state);
      expect(refusal, state).toBe(applyStates.includes(state) ? null : 'permit_state');
    }
    expect(stepActionRefusal('apply', step({ status: 'applied' }), 'accepted')).toBe('step_status');
  });

  it('when the permit is not handed back or cancelled, then removal is refused for the permit state; a step never applied or already off for its status', () => {
    for (const state of permitStates) expect(stepActionRefusal('remove', step({ status: 'verified' }), state), state).toBe(removeStates.includes(state) ? null : 'permit_state');
    expect(stepActionRefusal('remove', step({ status: 'planned' }), 'work_complete')).toBe('step_status');
    expect(stepActionRefusal('remove', step({ status: 'removed' }), 'work_complete')).toBe('step_status');
  });

  it('when something has been acknowledged once, then a second acknowledgement is refused as already done', () => {
    const on = step({ status: 'verified', remotelyOperable: true });
    expect(stepActionRefusal('acknowledgeApplied', on, 'isolated')).toBeNull();
    expect(stepActionRefusal('acknowledgeApplied', { ...on, controlRoomAckAppliedAt: '2026-12-02T07:00:00Z' }, 'isolated')).toBe('already_done');
    expect(stepActionRefusal('acknowledgeRemote', { ...on, remoteAckAt: new Date() }, 'isolated')).toBe('already_done');
    const off = step({ status: 'removed' });
    expect(stepActionRefusal('acknowledgeRemoved', off, 'work_complete')).toBeNull();
    expect(stepActionRefusal('acknowledgeRemoved', { ...off, controlRoomAckRemovedAt: 'x' }, 'work_complete')).toBe('already_done');
  });

  it('when a point cannot be operated remotely, then inhibiting it is refused as not remote, before anything else', () => {
    expect(stepActionRefusal('acknowledgeRemote', step({ status: 'planned' }), 'accepted')).toBe('not_remote');
    expect(stepActionRefusal('acknowledgeRemote', step({ status: 'planned', remotelyOperable: true }), 'accepted')).toBe('step_status');
  });

  it('when a plug with warnings is already out, then its warnings are no longer acknowledged; a plug without warnings never', () => {
    const warned = step({ kind: 'plug', status: 'verified', plugWarnings: [{ code: 'plug_too_short', message: 'short' }] });
    expect(stepActionRefusal('acknowledgePlugWarnings', warned, 'isolated')).toBeNull();
    expect(stepActionRefusal('acknowledgePlugWarnings', { ...warned, status: 'removed' }, 'work_complete')).toBe('step_status');
    expect(stepActionRefusal('acknowledgePlugWarnings', { ...warned, plugWarningsAckAt: 'x' }, 'isolated')).toBe('already_done');
    expect(stepActionRefusal('acknowledgePlugWarnings', step({ kind: 'plug', status: 'verified' }), 'isolated')).toBe('no_warnings');
  });

  it('when the screens ask which buttons to show, then each is exactly "no refusal" for every state and status', () => {
    for (const state of permitStates)
      for (const status of ['planned', 'applied', 'verified', 'removed'] as const) {
        const s = step({ status, remotelyOperable: true, kind: 'plug', plugWarnings: [{}] });
        const fit = stepActions(s, state);
        for (const action of stepActionNames) expect(fit[action], `${action} ${status} ${state}`).toBe(stepActionRefusal(action, s, state) === null);
      }
    expect(Object.values(acknowledgementAction).every((a) => stepActionNames.includes(a))).toBe(true);
  });

  it('when a step is applied or verified, then it is in place; valves and isolators take a lock, and every register point maps to a step kind', () => {
    expect(['planned', 'applied', 'verified', 'removed'].filter(isInPlace)).toEqual(['applied', 'verified']);
    expect(stepKinds.filter(takesLock)).toEqual(['block_valve', 'isolator']);
    for (const kind of isolationPointKinds) expect(stepKinds).toContain(stepKindForPoint[kind]);
  });
});

describe('finding 1: one next-gas-test-due rule', () => {
  const now = new Date('2026-12-02T15:00:00Z');
  it('when a live permit has no passing test, then it is due since work started, or now when that is unknown; the due-time list says the same', () => {
    const since = subMinutes(now, 40);
    expect(nextGasTestDue('live', null, 30, now, since)).toEqual(since);
    expect(nextGasTestDue('live', null, 30, now)).toEqual(now);
    const facts = {
      state: 'live' as const, kinds: [], liveSince: since, gas: { lastPassAt: null, intervalMinutes: 30 },
      vent: { lastAt: null, intervalMinutes: 60, open: 0 }, plug: { lastAt: null, intervalMinutes: 60, inPlace: 0 }, fireWatch: { hotWorkEndedAt: null, minutes: 60, lastCheckAt: null },
    };
    expect(dueTimes(facts, now)[0].dueAt).toEqual(nextGasTestDue('live', null, 30, now, since));
    expect(dueTimes({ ...facts, gas: { lastPassAt: subMinutes(now, 10), intervalMinutes: 30 } }, now)[0].dueAt).toEqual(addMinutes(now, 20));
  });

  it('when the permit is in any state but live, then no repeat test is due', () => {
    for (const state of permitStates) expect(nextGasTestDue(state, subMinutes(now, 10), 30, now) !== null, state).toBe(liveStates.includes(state));
  });
});

describe('finding 2: the isolation certificate rules live in shared/ too', () => {
  it('when a permit takes on a certificate, then it is still before its isolations are signed, up to the signature itself', () => {
    for (const s of certificateLinkStates) expect(beforeIsolatedStates, s).toContain(s);
    for (const s of statesFrom('confirm_isolated')) expect(certificateLinkStates, s).toContain(s);
  });

  it('when a permit is returned to service, closed or cancelled, then it lets go of its certificate; while it holds isolations it never does', () => {
    sameStates(certificateReleaseStates, [targetOf('return_to_service', 'work_complete')!, ...closedStates]);
    for (const s of holdsIsolations) expect(certificateReleaseStates, s).not.toContain(s);
  });

  it('when a certificate is live, then it is the one state that protects; a returned one does not', () => {
    expect(certificateStates.filter((state) => isCertificateLive({ state }))).toEqual(['live']);
  });
});

// What the rules replaced: lists of states and step statuses typed out again in the screens and the
// services. Migrations keep their literal SQL (they are history) and the demo seed writes data.
const root = fileURLToPath(new URL('../..', import.meta.url));
const skipped = ['server/src/db/migrations', 'server/src/demo', 'server/src/db/seed'];
function sources(dir: string): string[] {
  return readdirSync(join(root, dir), { withFileTypes: true }).flatMap((e) => {
    const path = `${dir}/${e.name}`;
    if (e.isDirectory()) return skipped.includes(path) ? [] : sources(path);
    return /\.tsx?$/.test(e.name) ? [path] : [];
  });
}

describe('finding 1: no copies of the rules outside shared/', () => {
  it('when the client and server sources are read, then no list of permit states, state comparison or "applied or verified" check is typed out', () => {
    const state = `'(?:${permitStates.join('|')})'`;
    const copies = [
      new RegExp(`\\[\\s*${state}(\\s*,\\s*${state})*\\s*\\]`), // ['live', 'suspended']
      new RegExp(`\\w*state\\s*(?:===|!==|=|<>|!=)\\s*${state}`, 'i'), // permit.state === 'live', p.state = 'live'
      new RegExp(`state\\s+(?:NOT\\s+)?IN\\s*\\(\\s*${state}`, 'i'), // state IN ('accepted', …)
      /'applied'\s*\|\||status IN \('applied'|\['applied',\s*'verified'\]/, // applied or verified
    ];
    const found: string[] = [];
    for (const file of [...sources('client/src'), ...sources('server/src')]) {
      readFileSync(join(root, file), 'utf8').split('\n').forEach((line, i) => {
        if (copies.some((re) => re.test(line))) found.push(`${relative(root, join(root, file))}:${i + 1}: ${line.trim()}`);
      });
    }
    expect(found).toEqual([]);
  });
});
