import type { ErrorDetail } from '@shared/errors/error-codes';

/** What was observed or done on site and waits on this device to be sent. */
export type OutboxKind = 'gas_test' | 'check' | 'step_apply' | 'step_verify' | 'crew_sign_on' | 'crew_sign_off' | 'photo';

export interface OutboxPhoto {
  blob: Blob;
  name: string;
  type: string;
  /** The size as taken, before it was made smaller on the device. */
  originalSize: number;
}

export interface OutboxRefusal {
  status: number;
  message: string;
  details: ErrorDetail[];
}

export interface OutboxRecord {
  /** Order of queuing; records are sent oldest first. */
  seq?: number;
  /** Also the Idempotency-Key: a record sent twice (an answer lost on the way) is applied once. */
  key: string;
  userId: string;
  tenantId: string;
  kind: OutboxKind;
  /** Plain words for the list: "Gas test, work area". */
  title: string;
  permitId: string;
  permitNumber?: string;
  path: string;
  body: Record<string, unknown>;
  /** Form fields sent beside a photo (multipart). */
  photo?: OutboxPhoto;
  /** When it was seen or done on site; never changed by a retry. */
  observedAt: string;
  queuedAt: string;
  state: 'waiting' | 'refused';
  attempts: number;
  /** Not sent again before this moment (ms since epoch), after a failed try. */
  nextAttemptAt: number;
  /** Why the last try did not get through, in plain words. */
  lastProblem?: string;
  refusal?: OutboxRefusal;
  /** Query key prefixes to fetch again once it has arrived. */
  invalidate: readonly (readonly unknown[])[];
}

export const BACKOFF_FIRST_MS = 2_000;
export const BACKOFF_MAX_MS = 5 * 60_000;

/** Wait after the n-th failed try (n ≥ 1): 2 s, 4 s, 8 s … at most 5 min. */
export function backoffMs(failedTries: number): number {
  return Math.min(BACKOFF_MAX_MS, BACKOFF_FIRST_MS * 2 ** Math.max(0, failedTries - 1));
}

/** The record to send next: the oldest waiting one. Refused records wait for a person and do not hold the rest back. */
export function nextToSend(records: readonly OutboxRecord[], now: number): { record: OutboxRecord; waitMs: number } | null {
  const waiting = records.filter((r) => r.state === 'waiting').sort((a, b) => (a.seq ?? 0) - (b.seq ?? 0));
  const record = waiting[0];
  if (!record) return null;
  // A later record never overtakes one waiting out its back-off: the server must see them in the order they happened.
  return { record, waitMs: Math.max(0, record.nextAttemptAt - now) };
}

export type SendFailure =
  | { kind: 'retry'; problem: string; offline: boolean }
  | { kind: 'signed_out'; problem: string }
  | { kind: 'refused'; refusal: OutboxRefusal };

interface FailureLike {
  status: number;
  code?: string;
  message: string;
  details?: ErrorDetail[];
}

const STILL_PROCESSING = /Idempotency-Key is still being processed/;

/** What a failed send means for the record: try again later, wait for a sign-in, or hand it back to the person. */
export function classifyFailure(err: FailureLike): SendFailure {
  if (err.status === 0) return { kind: 'retry', problem: 'No signal: it will be sent when the connection is back.', offline: true };
  if (err.status >= 500 || err.status === 408 || err.status === 429) return { kind: 'retry', problem: 'Holdpoint could not take it just now; it will try again shortly.', offline: false };
  if (err.status === 401) return { kind: 'signed_out', problem: 'Sign in again to send it.' };
  // The same record still being handled from an earlier try whose answer was lost.
  if (err.status === 409 && STILL_PROCESSING.test(err.message)) return { kind: 'retry', problem: 'Still being handled from an earlier try.', offline: false };
  return { kind: 'refused', refusal: { status: err.status, message: err.message, details: err.details ?? [] } };
}

/** The record after a failed try; its observed time and body stay as they were. */
export function afterFailure(record: OutboxRecord, failure: SendFailure, now: number): OutboxRecord {
  if (failure.kind === 'refused') return { ...record, state: 'refused', refusal: failure.refusal, lastProblem: failure.refusal.message };
  if (failure.kind === 'signed_out') return { ...record, lastProblem: failure.problem };
  const attempts = record.attempts + 1;
  return { ...record, attempts, nextAttemptAt: now + backoffMs(attempts), lastProblem: failure.problem };
}

/** "3 records waiting to send". */
export function waitingText(count: number): string {
  return count === 1 ? '1 record waiting to send' : `${count} records waiting to send`;
}

/** "2.4 MB" / "310 kB" for the photo sizes shown before and after compressing. */
export function sizeText(bytes: number): string {
  if (bytes >= 1_000_000) return `${(bytes / 1_000_000).toFixed(1)} MB`;
  return `${Math.max(1, Math.round(bytes / 1000))} kB`;
}
