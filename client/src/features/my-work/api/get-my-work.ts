import { useEffect } from 'react';
import { queryOptions, useQuery, useQueryClient } from '@tanstack/react-query';
import type { MyWork } from '@shared/types/my-work';
import { api } from '@client/lib/api-client';

export const myWorkKey = ['my-work'] as const;

/**
 * What waits for the signed-in person. The page and the navigation's counts read the same query:
 * refreshed every 30 s and when the window regains focus, and kept on the device for use without signal.
 */
export const getMyWorkQueryOptions = () =>
  queryOptions({
    queryKey: myWorkKey,
    queryFn: () => api.get<MyWork>('/api/my-work'),
    refetchInterval: 30_000,
    refetchOnWindowFocus: true,
    // Read afresh whenever the page opens: what someone just did should leave the list at once.
    staleTime: 0,
    meta: { persist: true },
  });

export const useMyWork = () => useQuery(getMyWorkQueryOptions());

/** The counts alone, for the navigation's badges (undefined until the first answer). */
export function useMyWorkCounts(enabled: boolean) {
  const queryClient = useQueryClient();
  // Whatever the person just did (approved, applied, acknowledged …) may take an item off their lists: read them again.
  useEffect(
    () =>
      queryClient.getMutationCache().subscribe((event) => {
        if (event.type === 'updated' && event.action.type === 'success') void queryClient.invalidateQueries({ queryKey: myWorkKey });
      }),
    [queryClient],
  );
  return useQuery({ ...getMyWorkQueryOptions(), enabled, select: (w) => ({ counts: w.counts, total: w.total }) });
}
