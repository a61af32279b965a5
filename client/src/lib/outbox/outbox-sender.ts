import { useSyncExternalStore } from 'react';
import type { MeResponse } from '@shared/types/auth';
import { api, ApiError } from '../api-client';
import { subscribeConnection, getConnection } from '../connection';
import { queryClient } from '../query-client';
import { afterFailure, classifyFailure, nextToSend, type OutboxRecord } from './outbox-rules';
import { outboxOf, removeFromOutbox, saveOutboxRecord } from './outbox-store';

/** The signed-in person and tenant whose records this device may send (the me query's key). */
export function outboxOwner(): { userId: string; tenantId: string } | null {
  const me = queryClient.getQueryData<MeResponse | null>(['auth', 'me']);
  return me?.activeTenantId ? { userId: me.user.id, tenantId: me.activeTenantId } : null;
}

export interface SendProgress {
  sending: boolean;
  /** Sent in this round. */
  sent: number;
  /** Waiting when this round started. */
  total: number;
}

let progress: SendProgress = { sending: false, sent: 0, total: 0 };
const listeners = new Set<() => void>();
function setProgress(next: SendProgress) {
  progress = next;
  for (const l of listeners) l();
}
const subscribeProgress = (l: () => void) => {
  listeners.add(l);
  return () => listeners.delete(l);
};
export const useSendProgress = () => useSyncExternalStore(subscribeProgress, () => progress, () => progress);

const deviceOnline = () => typeof navigator === 'undefined' || navigator.onLine !== false;

/** One request per record; a photo goes as the same multipart form the upload screen sends. */
async function sendRecord(record: OutboxRecord) {
  if (record.photo) {
    const form = new FormData();
    for (const [name, value] of Object.entries(record.body)) if (typeof value === 'string') form.append(name, value);
    form.append('file', new File([record.photo.blob], record.photo.name, { type: record.photo.type }), record.photo.name);
    return api.post(record.path, form, { idempotencyKey: record.key });
  }
  return api.post(record.path, record.body, { idempotencyKey: record.key });
}

let running: Promise<void> | null = null;
let timer: ReturnType<typeof setTimeout> | null = null;

function later(ms: number) {
  if (timer) clearTimeout(timer);
  timer = setTimeout(() => {
    timer = null;
    void sendWaiting();
  }, ms);
}

/**
 * Sends this person's waiting records one at a time, oldest first. A refusal stays in the outbox for
 * the person to decide; no answer or a server fault is tried again after a growing wait.
 */
export function sendWaiting(): Promise<void> {
  running ??= drain().finally(() => {
    running = null;
  });
  return running;
}

async function drain() {
  const owner = outboxOwner();
  if (!owner || !deviceOnline()) return;
  const mine = (await outboxOf(owner.userId)).filter((r) => r.tenantId === owner.tenantId);
  setProgress({ sending: true, sent: 0, total: mine.filter((r) => r.state === 'waiting').length });
  try {
    for (;;) {
      if (!deviceOnline()) return;
      const records = (await outboxOf(owner.userId)).filter((r) => r.tenantId === owner.tenantId);
      const next = nextToSend(records, Date.now());
      if (!next) return;
      if (next.waitMs > 0) return later(next.waitMs);
      const { record } = next;
      try {
        await sendRecord(record);
        await removeFromOutbox(record.seq!);
        setProgress({ ...progress, sent: progress.sent + 1 });
        await Promise.all(record.invalidate.map((queryKey) => queryClient.invalidateQueries({ queryKey })));
      } catch (err) {
        const e = err instanceof ApiError ? err : new ApiError(0, 'network', (err as Error).message);
        const failure = classifyFailure(e);
        const now = Date.now();
        const updated = afterFailure(record, failure, now);
        await saveOutboxRecord(updated);
        if (failure.kind === 'signed_out') return;
        if (failure.kind === 'retry') return later(updated.nextAttemptAt - now);
        await Promise.all(record.invalidate.map((queryKey) => queryClient.invalidateQueries({ queryKey })));
      }
    }
  } finally {
    setProgress({ ...progress, sending: false });
  }
}

/** Sending resumes by itself when the connection comes back, without waiting out the back-off. */
async function resumeNow() {
  const owner = outboxOwner();
  if (!owner) return;
  for (const r of await outboxOf(owner.userId)) if (r.state === 'waiting' && r.nextAttemptAt > 0) await saveOutboxRecord({ ...r, nextAttemptAt: 0 });
  await sendWaiting();
}

let wasOnline = getConnection().online;
subscribeConnection(() => {
  const { online } = getConnection();
  if (online && !wasOnline) void resumeNow();
  wasOnline = online;
});
