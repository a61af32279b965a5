import { createContext, useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { useQueryClient, type QueryKey } from '@tanstack/react-query';
import { alarmWords } from '@shared/live/alarms';
import type { LiveEvent } from '@shared/types/live';
import { AlarmBanner, type AlarmView } from '@client/components/ui/alarm-banner';
import { useConnection } from '@client/lib/connection';
import { loadAlarmMemory, saveAlarmMemory } from './alarm-memory';
import { listenForAudioUnlock, playAlarmSound, soundUnlocked, vibrateAlarm } from './alarm-sound';
import { LiveConnection, type LiveStatus } from './live-connection';

export interface LiveRegistry {
  /** A screen follows these permits (and refetches `alsoRefresh` when one changes) until the returned function is called. */
  watch: (ids: string[], alsoRefresh: QueryKey[]) => () => void;
  status: LiveStatus;
}

export const LiveContext = createContext<LiveRegistry | null>(null);

/** Changes close together refetch once. */
const REFETCH_DEBOUNCE_MS = 150;
/** While an alarm is open and unacknowledged, the sound repeats this often, a few times. */
const REPEAT_MS = 20_000;
const REPEATS = 3;

interface Props {
  userId: string | null | undefined;
  tenantId: string | null | undefined;
  timeZone: string | undefined;
  children: ReactNode;
}

const mentions = (key: QueryKey, ids: Set<string>) => {
  const text = JSON.stringify(key);
  for (const id of ids) if (text.includes(id)) return true;
  return false;
};
const startsWith = (key: QueryKey, prefix: QueryKey) => prefix.every((part, i) => JSON.stringify(key[i]) === JSON.stringify(part));

/**
 * The signed-in shell's live link: one stream for the tab, following every permit the open screens
 * watch. A change refetches that permit's queries; an alarm is shown at the top of the screen, sounds
 * and vibrates where the device allows, and stays until acknowledged here.
 */
export function AlarmProvider({ userId, tenantId, timeZone = 'UTC', children }: Props) {
  const qc = useQueryClient();
  const scope = userId && tenantId ? `${userId}.${tenantId}` : null;
  // The alarms still open and those acknowledged here, for this person and tenant (read anew when either changes).
  const [memory, setMemory] = useState(() => ({ scope, ...(scope ? loadAlarmMemory(scope) : { open: [] as LiveEvent[], seen: [] as number[] }) }));
  if (memory.scope !== scope) setMemory({ scope, ...(scope ? loadAlarmMemory(scope) : { open: [], seen: [] }) });
  const alarms = memory.open;
  const latest = useRef(memory);
  useEffect(() => {
    latest.current = memory;
  }, [memory]);
  /** Alarms raised in this tab, so a replay in the same moment does not raise one twice. */
  const raised = useRef(new Set<number>());
  const [status, setStatus] = useState<LiveStatus>('idle');
  const [soundOn, setSoundOn] = useState(soundUnlocked);
  const watchers = useRef(new Map<number, { ids: string[]; alsoRefresh: QueryKey[] }>());
  const nextWatcher = useRef(0);
  const pending = useRef<Set<string> | 'all'>(new Set());
  const refetchTimer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const watchTimer = useRef<ReturnType<typeof setTimeout> | undefined>(undefined);
  const repeats = useRef(0);
  const connection = useRef<LiveConnection | null>(null);
  const { online } = useConnection();

  const watchedIds = useCallback(() => [...new Set([...watchers.current.values()].flatMap((w) => w.ids))].sort(), []);

  const refetch = useCallback(
    (ids: string[] | 'all') => {
      if (ids === 'all' || pending.current === 'all') pending.current = 'all';
      else for (const id of ids) pending.current.add(id);
      clearTimeout(refetchTimer.current);
      refetchTimer.current = setTimeout(() => {
        const which = pending.current === 'all' ? new Set(watchedIds()) : pending.current;
        pending.current = new Set();
        if (!which.size) return;
        const extra = [...watchers.current.values()].filter((w) => w.ids.some((id) => which.has(id))).flatMap((w) => w.alsoRefresh);
        void qc.invalidateQueries({ predicate: (q) => mentions(q.queryKey, which) || extra.some((k) => startsWith(q.queryKey, k)) });
      }, REFETCH_DEBOUNCE_MS);
    },
    [qc, watchedIds],
  );

  const raise = useCallback(
    (event: LiveEvent) => {
      const current = latest.current;
      if (!scope || current.scope !== scope || raised.current.has(event.seq) || current.seen.includes(event.seq) || current.open.some((a) => a.seq === event.seq)) return;
      raised.current.add(event.seq);
      setMemory((m) => {
        if (m.scope !== scope || m.open.some((a) => a.seq === event.seq)) return m;
        const next = { ...m, open: [event, ...m.open] };
        saveAlarmMemory(scope, next);
        return next;
      });
      repeats.current = 0;
      setSoundOn(playAlarmSound() || soundUnlocked());
      vibrateAlarm();
    },
    [scope],
  );

  useEffect(() => listenForAudioUnlock(() => setSoundOn(soundUnlocked())), []);

  useEffect(() => {
    if (!scope) return;
    const live = new LiveConnection({
      onReady: () => refetch('all'),
      onEvent: (event) => {
        refetch(event.permits.map((p) => p.id));
        if (event.alarm) raise(event);
      },
      onRefresh: refetch,
      onStatus: setStatus,
    });
    connection.current = live;
    live.watch(watchedIds());
    return () => {
      live.close();
      connection.current = null;
    };
  }, [scope, raise, refetch, watchedIds]);

  useEffect(() => {
    connection.current?.setOffline(!online);
  }, [online, scope]);

  // An open alarm sounds again a few times, in case the first was missed over site noise.
  useEffect(() => {
    if (!alarms.length) return;
    const timer = setInterval(() => {
      setSoundOn(soundUnlocked());
      if (repeats.current >= REPEATS) return;
      repeats.current++;
      playAlarmSound();
    }, REPEAT_MS);
    return () => clearInterval(timer);
  }, [alarms.length]);

  const acknowledge = useCallback(
    (key: string) => {
      const seq = Number(key);
      setMemory((m) => {
        const next = { ...m, open: m.open.filter((a) => a.seq !== seq), seen: [...m.seen.filter((n) => n !== seq), seq] };
        if (m.scope) saveAlarmMemory(m.scope, next);
        return next;
      });
    },
    [],
  );

  const watch = useCallback(
    (ids: string[], alsoRefresh: QueryKey[]) => {
      const id = nextWatcher.current++;
      watchers.current.set(id, { ids, alsoRefresh });
      // One screen replacing another (unmount, mount) reopens the stream once, not twice.
      const apply = () => {
        clearTimeout(watchTimer.current);
        watchTimer.current = setTimeout(() => connection.current?.watch(watchedIds()), 50);
      };
      apply();
      return () => {
        watchers.current.delete(id);
        apply();
      };
    },
    [watchedIds],
  );
  const registry = useMemo<LiveRegistry>(() => ({ status, watch }), [status, watch]);

  const views: AlarmView[] = alarms.map((a) => ({ key: String(a.seq), ...alarmWords(a, timeZone), permit: a.permits[0] ?? null }));
  return (
    <LiveContext.Provider value={registry}>
      <AlarmBanner alarms={views} onAcknowledge={acknowledge} soundOn={soundOn} />
      {children}
    </LiveContext.Provider>
  );
}
