import type { AlarmKind } from '../live/alarms';
import type { Moment } from './moment';

/** A permit a live event concerns, as the alarm names it. */
export interface LivePermitRef {
  id: string;
  number: string;
}

/** What a live event tells beyond its action: only the facts an alarm or a refetch needs. */
export interface LiveEventFacts {
  /** A gas test's verdict and where it was taken. */
  verdict?: string;
  place?: string;
  /** An overdue occurrence: which timed check and when it was due. */
  check?: string;
  dueAt?: string;
  /** A suspension: who stopped the work (a person's role, or Holdpoint itself). */
  suspendedBy?: string;
  /** An isolation certificate's number. */
  certificateNumber?: string;
}

/**
 * One event of GET /api/stream ("change"): an audit event of a watched permit (or of the isolation
 * certificate it works under), with the tenant's audit sequence number as the event's id.
 */
export interface LiveEvent<M extends Moment = string> {
  seq: number;
  permits: LivePermitRef[];
  action: string;
  fromState: string | null;
  toState: string | null;
  actorName: string | null;
  reason: string | null;
  occurredAt: M;
  facts: LiveEventFacts;
  alarm: AlarmKind | null;
}

/** The stream's "ready": the permits it follows (those the caller may read) and the sequence it starts after. */
export interface LiveReady {
  permitIds: string[];
  seq: number;
}

/** "refresh": a watched permit changed without an audit event of its own; refetch it. */
export interface LiveRefresh {
  permitId: string;
}
