import type { Moment } from './moment';

/** A person with their personal lock on the permit's lockbox right now. */
export interface LockboxCrewMember<Time extends Moment = string> {
  userId: string;
  name: string;
  personalLockNumber: string;
  signedOnAt: Time;
}

/**
 * The permit's group lockbox (tenants whose group lockout is per person): the keys of the permit's
 * applied locks are inside, and it opens only when every personal lock is off.
 */
export interface PermitLockbox<Time extends Moment = string> {
  /** Whether the tenant's group lockout is per person; when false the other fields are empty. */
  perPerson: boolean;
  label: string | null;
  /** Lock numbers of the permit's isolations still applied: the keys in the box. */
  keys: string[];
  crewOn: LockboxMember<Time>[];
}

/** An authoriser's signed record that a crew member whose personal lock is on the box is away (OSHA 29 CFR 1910.147(e)(3)). */
export interface LockboxException<Time extends Moment = string> {
  recordedAt: Time;
  authoriserId: string;
  authoriserName: string;
}

/** A person on the lockbox as the permit shows them: with the exception recorded for their lock, if any. */
export interface LockboxMember<Time extends Moment = string> extends LockboxCrewMember<Time> {
  exception: LockboxException<Time> | null;
}
