import { isNetworkError } from '../api-client';
import { addToOutbox, hasWaiting, type NewOutboxRecord } from './outbox-store';
import { outboxOwner, sendWaiting } from './outbox-sender';

/** What a queue-aware mutation resolves with when the record stayed on the device. */
export interface Queued {
  queued: true;
  key: string;
  title: string;
  /** For a photo: its size as taken and as queued. */
  sizes?: { before: number; after: number };
}

export const isQueued = (value: unknown): value is Queued => typeof value === 'object' && value !== null && (value as { queued?: unknown }).queued === true;

/** The words a form shows for a record kept on the device. */
export const QUEUED_MESSAGE = 'Saved on this device; it will send when you have signal.';

export function newIdempotencyKey(): string {
  if (typeof crypto !== 'undefined' && typeof crypto.randomUUID === 'function') return crypto.randomUUID();
  const b = crypto.getRandomValues(new Uint8Array(16));
  return Array.from(b, (x) => x.toString(16).padStart(2, '0')).join('');
}

export type OutboxItem = Omit<NewOutboxRecord, 'key' | 'userId' | 'tenantId'>;

/**
 * Online: sends now, with an Idempotency-Key. Offline, when the request gets no answer, or while older
 * records still wait (so nothing overtakes them): keeps it in the outbox under the same key and
 * resolves with `{ queued: true }`. A refusal by the server is thrown as before, for the form to show.
 */
export async function sendOrQueue<T>(item: OutboxItem | (() => Promise<OutboxItem>), send: (idempotencyKey: string) => Promise<T>): Promise<T | Queued> {
  const key = newIdempotencyKey();
  const owner = outboxOwner();
  if (!owner) return send(key);
  const queue = async (): Promise<Queued> => {
    // Made only when it is kept: a photo is compressed for the outbox, not for a direct upload.
    const record = typeof item === 'function' ? await item() : item;
    await addToOutbox({ ...record, key, ...owner });
    void sendWaiting();
    return { queued: true, key, title: record.title, ...(record.photo ? { sizes: { before: record.photo.originalSize, after: record.photo.blob.size } } : {}) };
  };
  const offline = typeof navigator !== 'undefined' && navigator.onLine === false;
  if (offline || (await hasWaiting(owner.userId))) return queue();
  try {
    return await send(key);
  } catch (err) {
    if (isNetworkError(err)) return queue();
    throw err;
  }
}
