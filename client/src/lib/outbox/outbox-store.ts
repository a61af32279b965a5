import { useEffect, useState } from 'react';
import { deviceDb } from './device-store';
import type { OutboxRecord } from './outbox-rules';

export type NewOutboxRecord = Omit<OutboxRecord, 'seq' | 'state' | 'attempts' | 'nextAttemptAt' | 'queuedAt'>;

export async function addToOutbox(record: NewOutboxRecord): Promise<OutboxRecord> {
  const full: OutboxRecord = { ...record, state: 'waiting', attempts: 0, nextAttemptAt: 0, queuedAt: new Date().toISOString() };
  const seq = await (await deviceDb()).outbox.add(full);
  return { ...full, seq };
}

export const outboxOf = async (userId: string) => (await deviceDb()).outbox.where('userId').equals(userId).sortBy('seq');
export const hasWaiting = async (userId: string) => (await outboxOf(userId)).some((r) => r.state === 'waiting');
export const saveOutboxRecord = async (record: OutboxRecord) => (await deviceDb()).outbox.put(record);
export const removeFromOutbox = async (seq: number) => (await deviceDb()).outbox.delete(seq);

/** This person's outbox, kept up to date as records are added, sent or refused (also from other tabs). */
export function useOutboxRecords(userId: string | undefined): OutboxRecord[] | undefined {
  const [records, setRecords] = useState<OutboxRecord[] | undefined>(undefined);
  useEffect(() => {
    if (!userId) return undefined;
    let stop = false;
    let unsubscribe = () => {};
    void Promise.all([import('dexie'), deviceDb()]).then(([{ liveQuery }, db]) => {
      if (stop) return;
      // Only Dexie's own calls inside the query, so it sees what to watch.
      const sub = liveQuery(() => db.outbox.where('userId').equals(userId).sortBy('seq')).subscribe({ next: setRecords, error: () => setRecords([]) });
      unsubscribe = () => sub.unsubscribe();
    });
    return () => {
      stop = true;
      unsubscribe();
    };
  }, [userId]);
  return userId ? records : [];
}
