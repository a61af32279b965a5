import type { Moment } from './moment';

/** One event of the tenant-wide audit log, with what changed in words. */
export interface AuditLogEvent<T extends Moment = string> {
  seq: number;
  entityType: string;
  entityId: string;
  permitId: string | null;
  permitNumber: string | null;
  action: string;
  /** The kind of event in words. */
  actionLabel: string;
  fromState: string | null;
  toState: string | null;
  /** "Submitted → Approved", or empty when the event changed no state. */
  change: string;
  /** The event's other recorded values in words ("Lock: L-102; Tag: T-55"). */
  details: string[];
  actorUserId: string | null;
  actorName: string | null;
  actorRole: string | null;
  reason: string | null;
  occurredAt: T;
  hash: string;
  prevHash: string;
}

export interface AuditChainBreak {
  seq: number;
  lastSeq?: number;
  problem: string;
}

/** A chain check, run in the background; polled until done. */
export interface AuditChainCheck<T extends Moment = string> {
  id: string;
  status: 'running' | 'done' | 'failed';
  /** Events checked so far and the events the check will read. */
  checked: number;
  total: number;
  ok: boolean | null;
  /** The last event the chain was verified to. */
  lastSeq: number | null;
  breaks: AuditChainBreak[];
  startedAt: T;
  finishedAt: T | null;
}

/** A signed statement of the chain head: tenant, sequence, hash and time, signed with Holdpoint's Ed25519 key. */
export interface AuditCheckpoint<T extends Moment = string> {
  id: string;
  tenantId: string;
  seq: number;
  hash: string;
  signedAt: T;
  /** Why it was made: the tenant's interval, a printed permit, or a person asking. */
  reason: 'interval' | 'print' | 'request';
  /** The exact bytes signed (canonical JSON of { hash, seq, tenant, time }). */
  payload: string;
  /** Ed25519 signature of the payload, base64. */
  signature: string;
  keyId: string;
}

export interface AuditPublicKey {
  keyId: string;
  algorithm: 'Ed25519';
  pem: string;
}

/** People who appear in the tenant's audit log, for the "who" filter. */
export interface AuditActorOption {
  userId: string;
  name: string;
}
