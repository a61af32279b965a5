import { Dexie, type EntityTable } from 'dexie';
import type { OutboxRecord } from './outbox-rules';

interface CacheEntry {
  key: string;
  value: string;
}

/** This device's own store: the outbox and the copy of what a person needs on site. */
class DeviceDb extends Dexie {
  outbox!: EntityTable<OutboxRecord, 'seq'>;
  cache!: EntityTable<CacheEntry, 'key'>;
  constructor() {
    super('holdpoint-device');
    this.version(1).stores({ outbox: '++seq, &key, userId', cache: 'key' });
  }
}

export const deviceDb = new DeviceDb();
