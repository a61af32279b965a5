import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PermitRegime } from '@shared/types/timed-checks';
import { api } from '@client/lib/api-client';
import { gasKeys } from './keys';

export const getRegimeQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: gasKeys.regime(permitId),
    queryFn: () => api.get<PermitRegime>(`/api/permits/${encodeURIComponent(permitId)}/regime`),
    // Due times move with the clock; look again every minute.
    refetchInterval: 60_000,
  });

export const useRegime = (permitId: string) => useQuery(getRegimeQueryOptions(permitId));
