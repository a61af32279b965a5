import type { LiveEvent } from '@shared/types/live';

/**
 * What this device remembers about alarms, per person and tenant: the alarms still open (so a reload
 * or a refetch does not lose one before it is acknowledged) and the sequence numbers acknowledged here
 * (so a replay after a reconnect does not raise them again). Acknowledgement is local to the device.
 */
interface Memory {
  open: LiveEvent[];
  seen: number[];
}

const KEEP_SEEN = 300;
const KEEP_OPEN = 30;
const keyOf = (scope: string) => `holdpoint.alarms.${scope}`;

function storage(): Storage | null {
  try {
    return typeof localStorage === 'undefined' ? null : localStorage;
  } catch {
    return null;
  }
}

export function loadAlarmMemory(scope: string): Memory {
  try {
    const raw = storage()?.getItem(keyOf(scope));
    const parsed = raw ? (JSON.parse(raw) as Partial<Memory>) : {};
    return { open: Array.isArray(parsed.open) ? parsed.open : [], seen: Array.isArray(parsed.seen) ? parsed.seen.filter((n) => typeof n === 'number') : [] };
  } catch {
    return { open: [], seen: [] };
  }
}

export function saveAlarmMemory(scope: string, memory: Memory) {
  try {
    storage()?.setItem(keyOf(scope), JSON.stringify({ open: memory.open.slice(-KEEP_OPEN), seen: memory.seen.slice(-KEEP_SEEN) }));
  } catch {
    /* storage full or refused: the alarm still shows for this visit */
  }
}
