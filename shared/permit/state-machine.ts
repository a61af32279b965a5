import type { Action } from '../abilities/define-ability';
import { readinessGaps, type IsolationReadiness } from '../isolations/readiness';
import { isCertificateLive, type CertificateState } from '../isolations/certificate-states';
import { permitStates, qualificationForKind, type PermitState, type WorkKind } from './states';
import { fireWatchCloseGap, stopWorkGaps, type StopWorkFacts } from './stop-work';
import { resumeNeedsAuthoriser, suspendedByLabels, type SuspendedByKind } from './suspension';
import { formatInZone } from '../time/zone';

export const permitEvents = [
  'submit',
  'reject',
  'approve',
  'accept',
  'confirm_isolated',
  'start_work',
  'suspend',
  'resume',
  'hand_back',
  'return_to_service',
  'acknowledge_return',
  'close',
  'cancel',
  'expire',
  'revalidate',
] as const;
export type PermitEvent = (typeof permitEvents)[number];

export const permitEventLabels: Record<PermitEvent, string> = {
  submit: 'Send for approval',
  reject: 'Send back with reasons',
  approve: 'Approve and issue',
  accept: 'Accept for the crew',
  confirm_isolated: 'Sign isolations in place',
  start_work: 'Start work',
  suspend: 'Suspend work',
  resume: 'Resume work',
  hand_back: 'Hand back',
  return_to_service: 'Return to service',
  acknowledge_return: 'Acknowledge return to service',
  close: 'Close permit',
  cancel: 'Cancel permit',
  expire: 'Expire',
  revalidate: 'Re-validate',
};

/**
 * Events that are signatures: the signer re-enters the password and types their name. Signing the
 * isolations in place is the authoriser's (HSE HSG250: the issuer signs that the isolations are made
 * before work starts).
 */
export const signedEvents: readonly PermitEvent[] = ['approve', 'accept', 'confirm_isolated', 'hand_back', 'return_to_service'];
/** Events that need a reason in words. */
export const reasonedEvents: readonly PermitEvent[] = ['reject', 'suspend', 'cancel'];
/** Events only the server fires (the scheduler expires a permit). A failing gas test fires the ordinary `suspend`, as the system actor. */
export const systemEvents: readonly PermitEvent[] = ['expire'];

/** The CASL action a person needs on the permit to fire each event. */
export const eventAction: Record<PermitEvent, Action> = {
  submit: 'request',
  reject: 'reject',
  approve: 'approve',
  accept: 'accept',
  confirm_isolated: 'approve',
  start_work: 'start_work',
  suspend: 'suspend',
  resume: 'resume',
  hand_back: 'hand_back',
  return_to_service: 'return_to_service',
  acknowledge_return: 'acknowledge',
  close: 'close',
  cancel: 'cancel',
  expire: 'suspend',
  revalidate: 'revalidate',
};

const table: Record<PermitEvent, Partial<Record<PermitState, PermitState>>> = {
  submit: { draft: 'requested' },
  reject: { requested: 'draft' },
  approve: { requested: 'approved' },
  accept: { approved: 'accepted' },
  confirm_isolated: { accepted: 'isolated' },
  start_work: { isolated: 'live' },
  suspend: { live: 'suspended' },
  resume: { suspended: 'live' },
  hand_back: { live: 'work_complete', suspended: 'work_complete' },
  return_to_service: { work_complete: 'returned_to_service' },
  acknowledge_return: { returned_to_service: 'returned_to_service' },
  close: { returned_to_service: 'closed' },
  cancel: { draft: 'cancelled', requested: 'cancelled', approved: 'cancelled', accepted: 'cancelled', isolated: 'cancelled', expired: 'cancelled' },
  // A live permit whose time runs out is suspended, not expired: the crew must stop but the record stays open.
  expire: { approved: 'expired', accepted: 'expired', isolated: 'expired', live: 'suspended' },
  revalidate: { expired: 'approved', suspended: 'suspended' },
};

/** What the guards need to know, gathered by the server from the database. */
export interface PermitFacts {
  state: PermitState;
  kinds: WorkKind[];
  requesterUserId: string;
  contractorOrganisationId: string;
  contractorLeadUserId: string | null;
  validFrom: Date;
  validTo: Date;
  /** The state an expired permit returns to when re-validated. */
  stateBeforeExpiry: PermitState | null;
  checklist: { key: string; label: string; required: boolean; confirmed: boolean }[];
  isolation: {
    steps: number;
    applied: number;
    verified: number;
    /** Steps verified by the same person who applied them: never counted. */
    selfVerified: number;
    remoteValvesWithoutAck: number;
    /** Steps of this permit still applied (for return to service). */
    stillApplied: number;
    ventsOpen: number;
    plugsInPlace: number;
    plugWarningsUnacknowledged: number;
    /** Isolating devices per side of the work and the proving of the section (shared/isolations/readiness.ts). */
    readiness: IsolationReadiness;
  };
  gas: { lastPassAt: Date | null; lastFailAt: Date | null; windowMinutes: number };
  fireWatchEndsAt: Date | null;
  walkdownComplete: boolean;
  controlRoomAcknowledged: boolean;
  /** Points of this plan another permit holds in place, each in words ("CR-VT-196 is held open by PW-2026-0002"). */
  conflicts: string[];
  hasExpiredFlag: boolean;
  /** Group lockout per person: how many personal locks are on the permit's lockbox; absent when the site locks per permit. */
  crewOnLockbox?: number | null;
  /**
   * The isolation certificate the permit works under (HSE HSG253, HSG250): null when none covers it.
   * The server always gathers it; absent only where a caller of the pure rules has nothing to say about it.
   */
  certificate?: PermitCertificateFacts | null;
  /** Failed vent and plug checks, plugs left overnight, gas verdicts per place and the fire watch's closing check (shared/permit/stop-work.ts). */
  stopWork?: StopWorkFacts;
  /** Everyone who wrote or changed the permit's content or isolation plan, the requester included (four eyes). */
  editorUserIds?: string[];
  /** The lead who holds the permit now (after a shift handover, the incoming lead). */
  holderUserId?: string | null;
  /** Who stopped the work on a suspended permit (shared/permit/suspension.ts). */
  suspendedByKind?: SuspendedByKind | null;
  /** The site's zone (IANA), so a time in a reason reads as the site's clock with the zone named. */
  timeZone?: string;
}

export interface PermitCertificateFacts {
  number: string;
  state: CertificateState;
  /** A failed re-check not yet cleared by a passing one. */
  problem: string | null;
}

/** HSE HSG253, HSG250: work starts and resumes only under a live isolation certificate whose last re-check passed. */
export function certificateGaps(certificate: PermitCertificateFacts | null | undefined): string[] {
  if (certificate === undefined) return [];
  if (certificate === null) return ['No isolation certificate covers this permit: work starts only under a live certificate, which the authoriser’s signature on the isolations issues.'];
  if (!isCertificateLive(certificate)) return [`Isolation certificate ${certificate.number} has been returned: work starts only under a live certificate.`];
  if (certificate.problem) return [`Isolation certificate ${certificate.number} failed its last re-check (${certificate.problem}). Put it right and record a passing re-check first.`];
  return [];
}

export interface ActorFacts {
  userId: string;
  organisationIds: string[];
  roles: string[];
  /** In-date qualification kinds held today. */
  qualifications: string[];
  isSystem?: boolean;
}

export type TransitionResult = { ok: true; to: PermitState } | { ok: false; reasons: string[] };

const minutes = (ms: number) => Math.round(ms / 60_000);

/**
 * The permit lifecycle as a pure function: given the facts, the actor and the event, either the next
 * state or every reason the event is refused, each phrased so the person knows what is missing.
 * Role permission (who may fire which event) is checked separately with CASL via `eventAction`.
 */
export function decide(event: PermitEvent, facts: PermitFacts, actor: ActorFacts, now: Date, input: { reason?: string } = {}): TransitionResult {
  const to = table[event]?.[facts.state];
  if (!to) return { ok: false, reasons: [`A permit that is ${facts.state.replace(/_/g, ' ')} cannot be sent "${permitEventLabels[event]}".`] };
  if (systemEvents.includes(event) && !actor.isSystem) return { ok: false, reasons: ['Only Holdpoint itself expires a permit, when its validity window ends.'] };

  const reasons: string[] = [];
  if (reasonedEvents.includes(event) && !(input.reason && input.reason.trim().length >= 3)) reasons.push('Give a reason in words.');
  const windowOpen = now >= facts.validFrom && now <= facts.validTo;

  switch (event) {
    case 'submit':
      if (facts.validTo <= facts.validFrom) reasons.push('The validity window must end after it starts.');
      break;
    case 'approve':
      if (actor.userId === facts.requesterUserId) reasons.push('You requested this permit, so someone else must approve it (two-person rule).');
      // HSE HSG250: the issuer checks work someone else planned; an authoriser who changed the permit or its plan is no longer that someone else.
      else if (facts.editorUserIds?.includes(actor.userId))
        reasons.push('You wrote or changed this permit or its isolation plan, so another authoriser must approve it (four-eyes rule).');
      if (facts.validTo < now) reasons.push('The validity window has already ended; change it before approving.');
      if (facts.conflicts.length) reasons.push(`The plan would operate points another permit holds in place: ${facts.conflicts.join('; ')}.`);
      break;
    case 'accept': {
      if (!actor.organisationIds.includes(facts.contractorOrganisationId) || !actor.roles.includes('contractor_lead'))
        reasons.push('Only a contractor lead of the named contractor organisation can accept this permit.');
      if (facts.contractorLeadUserId && facts.contractorLeadUserId !== actor.userId) reasons.push('This permit names another contractor lead.');
      const needed = facts.kinds.map((k) => qualificationForKind[k]).filter((q) => !actor.qualifications.includes(q));
      if (needed.length) reasons.push(`You need an in-date qualification for: ${needed.map((q) => q.replace(/_/g, ' ')).join(', ')}.`);
      if (facts.validTo < now) reasons.push('The validity window has already ended.');
      break;
    }
    case 'confirm_isolated':
      reasons.push(...isolatedGaps(facts));
      break;
    case 'start_work':
    case 'resume':
      // Common practice (HSE HSG250): work stopped by the control room, an authoriser or Holdpoint itself restarts only on an authoriser's re-validation, with a reason.
      if (event === 'resume' && resumeNeedsAuthoriser(facts.suspendedByKind)) {
        if (!actor.roles.includes('authoriser'))
          reasons.push(`This permit was suspended by ${suspendedByLabels[facts.suspendedByKind ?? 'system']}: only an authoriser can re-validate it and let work resume.`);
        else if (!(input.reason && input.reason.trim().length >= 3)) reasons.push('Give a reason in words: what was checked before work resumes.');
      }
      // OSHA 29 CFR 1910.147(f)(3)(ii)(D): each person working puts a personal lock on the group lockbox when they begin;
      // (f)(4): the last lock may come off a suspended permit's box, so resuming needs a lock on it again.
      if (facts.crewOnLockbox === 0)
        reasons.push('Nobody has signed on to the lockbox: each person working puts a personal lock on it first.');
      reasons.push(...certificateGaps(facts.certificate));
      reasons.push(...isolationGaps(facts));
      if (!windowOpen) reasons.push(now < facts.validFrom ? 'The permit is not valid yet.' : 'The validity window has ended; the authoriser must re-validate it.');
      if (!facts.gas.lastPassAt) reasons.push('Record a passing gas test first.');
      else {
        // To the millisecond, never rounded: a test 30 min 20 s old is outside a 30-minute window.
        const ageMs = now.getTime() - facts.gas.lastPassAt.getTime();
        if (ageMs > facts.gas.windowMinutes * 60_000)
          reasons.push(`The last passing gas test is ${Math.ceil(ageMs / 60_000)} minutes old; a new one is needed within ${facts.gas.windowMinutes} minutes of starting.`);
        // A fail at the same time as the last pass counts against it: times are typed to the minute, so
        // the two cannot be told apart and the unsafe reading must win.
        if (facts.gas.lastFailAt && facts.gas.lastFailAt >= facts.gas.lastPassAt) reasons.push('The latest gas test failed; record a passing test first.');
      }
      {
        const open = facts.checklist.filter((c) => c.required && !c.confirmed);
        if (open.length) reasons.push(`Confirm the required checklist items: ${open.map((c) => c.label).join('; ')}.`);
      }
      if (facts.isolation.plugWarningsUnacknowledged) reasons.push(`${facts.isolation.plugWarningsUnacknowledged} plug record(s) have warnings the authoriser must acknowledge.`);
      // Stop-work conditions (shared/permit/stop-work.ts); the gas reasons above already cover "no pass at all", "too old" and "the latest failed".
      if (facts.stopWork) {
        const { lastPassAt, lastFailAt, windowMinutes } = facts.gas;
        const tooOld = !lastPassAt || now.getTime() - lastPassAt.getTime() > windowMinutes * 60_000;
        const latestFailed = Boolean(lastPassAt && lastFailAt && lastFailAt >= lastPassAt);
        reasons.push(...stopWorkGaps(facts.stopWork, windowMinutes, now, { skipGasFail: !lastPassAt || latestFailed, skipGasAge: tooOld }));
      }
      break;
    case 'hand_back':
      // HSE HSG250: the person who holds the permit now hands it back; after a shift handover that is the incoming lead.
      if ((facts.holderUserId ?? facts.contractorLeadUserId) && (facts.holderUserId ?? facts.contractorLeadUserId) !== actor.userId)
        reasons.push('Only the lead who holds this permit now can hand it back. After a shift handover, that is the incoming lead.');
      // The fire watch runs from when hot work stopped; without that record it has not started.
      if (facts.kinds.includes('hot_work') && !facts.fireWatchEndsAt) reasons.push('Record that hot work has stopped; the fire watch must run its full time before hand-back.');
      else if (facts.fireWatchEndsAt && facts.fireWatchEndsAt > now)
        reasons.push(`The fire watch runs until ${formatInZone(facts.fireWatchEndsAt, facts.timeZone ?? 'UTC')} (${minutes(facts.fireWatchEndsAt.getTime() - now.getTime())} minutes more).`);
      // NFPA 51B (2019 edition): the watch ends with the fire watcher's check that the area is clear and nothing smoulders.
      if (facts.stopWork) {
        const closing = fireWatchCloseGap(facts.fireWatchEndsAt, facts.stopWork.fireWatchClearAt, now, facts.stopWork.timeZone);
        if (closing) reasons.push(closing);
      }
      break;
    case 'return_to_service':
      if (facts.isolation.stillApplied) reasons.push(`${facts.isolation.stillApplied} isolation(s) of this permit are still applied; remove them first.`);
      if (facts.isolation.ventsOpen) reasons.push(`${facts.isolation.ventsOpen} vent(s) are still open.`);
      if (facts.isolation.plugsInPlace) reasons.push(`${facts.isolation.plugsInPlace} plug(s) are still in place or not recorded as removed or displaced.`);
      if (!facts.walkdownComplete) reasons.push('Complete the walk-down checklist.');
      break;
    case 'acknowledge_return':
      if (!actor.roles.includes('control_room')) reasons.push('Only the control room acknowledges that the line is back in service.');
      break;
    case 'close':
      if (!facts.controlRoomAcknowledged) reasons.push('The control room has not acknowledged the return to service yet.');
      break;
    case 'revalidate':
      if (facts.state === 'suspended' && !facts.hasExpiredFlag) reasons.push('Only a permit suspended because its time ran out can be re-validated.');
      if (facts.validTo <= now) reasons.push('Set a new validity window that ends in the future.');
      break;
    default:
      break;
  }
  if (reasons.length) return { ok: false, reasons };
  if (event === 'revalidate' && facts.state === 'expired') return { ok: true, to: facts.stateBeforeExpiry ?? 'approved' };
  return { ok: true, to };
}


/** Every step of the plan applied and verified by a second person (and a remote valve's remote operation inhibited). */
function isolationGaps(facts: Pick<PermitFacts, 'isolation'>): string[] {
  const r: string[] = [];
  const i = facts.isolation;
  if (i.steps === 0) r.push('The isolation plan has no steps.');
  else if (i.verified < i.steps) r.push(`${i.steps - i.verified} of ${i.steps} isolation step(s) are not yet applied and verified by a second person.`);
  if (i.selfVerified) r.push(`${i.selfVerified} step(s) were verified by the person who applied them; someone else must verify.`);
  if (i.remoteValvesWithoutAck) r.push(`${i.remoteValvesWithoutAck} remotely operable valve(s) lack the control room's acknowledgement that remote operation is inhibited.`);
  return r;
}

/**
 * What keeps the authoriser from signing the isolations in place, the same words on the permit page:
 * every step verified, an isolating device on every open side of the work, and the section proved
 * dead. Work starts and resumes only from Isolated, which this event alone reaches.
 */
export function isolatedGaps(facts: Pick<PermitFacts, 'isolation'>): string[] {
  return [...isolationGaps(facts), ...readinessGaps(facts.isolation.readiness)];
}

/** The events that exist from a state (ignoring guards and roles), for listing possible actions. */
export function eventsFrom(state: PermitState): PermitEvent[] {
  return permitEvents.filter((e) => table[e][state] !== undefined && !systemEvents.includes(e));
}

/** The states an event can fire from (ignoring guards and roles), e.g. the permits the scheduler may expire. */
export function statesFrom(event: PermitEvent): PermitState[] {
  return permitStates.filter((s) => table[event][s] !== undefined);
}

export function targetOf(event: PermitEvent, state: PermitState): PermitState | undefined {
  return table[event][state];
}
