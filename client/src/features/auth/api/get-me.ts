import { queryOptions, useQuery } from '@tanstack/react-query';
import type { MeResponse } from '@shared/types/auth';
import { api, ApiError } from '@client/lib/api-client';

/** The signed-in user, or null when nobody is signed in. */
export const getMeQueryOptions = () =>
  queryOptions({
    queryKey: ['auth', 'me'],
    queryFn: async (): Promise<MeResponse | null> => {
      try {
        return await api.get<MeResponse>('/api/auth/me');
      } catch (err) {
        if (err instanceof ApiError && err.status === 401) return null;
        throw err;
      }
    },
    staleTime: 60_000,
  });

export const useMe = () => useQuery(getMeQueryOptions());
