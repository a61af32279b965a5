import { useContext, useEffect } from 'react';
import type { QueryKey } from '@tanstack/react-query';
import { LiveContext } from './alarm-provider';

/**
 * The screen follows these permits while it is open: their changes refetch their queries (and
 * `alsoRefresh`, e.g. a list that shows them), their alarms reach the top of the screen. Outside the
 * signed-in shell it does nothing.
 */
export function useWatchPermits(ids: readonly (string | null | undefined)[], alsoRefresh: QueryKey[] = []) {
  const live = useContext(LiveContext);
  const watch = live?.watch;
  const key = [...new Set(ids.filter((id): id is string => !!id))].sort().join(',');
  const extra = JSON.stringify(alsoRefresh);
  useEffect(() => {
    if (!watch || !key) return;
    return watch(key.split(','), JSON.parse(extra) as QueryKey[]);
  }, [watch, key, extra]);
  return live?.status ?? 'idle';
}

/** One permit's screen: the permit page, a task screen. */
export const useWatchPermit = (id: string | null | undefined) => useWatchPermits([id]);
