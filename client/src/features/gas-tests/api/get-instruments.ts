import { queryOptions, useQuery } from '@tanstack/react-query';
import type { InstrumentList } from '@shared/types/gas-tests';
import { api, qs } from '@client/lib/api-client';
import { gasKeys } from './keys';

export const getInstrumentsQueryOptions = (includeRetired = false) =>
  queryOptions({
    queryKey: [...gasKeys.instruments, { includeRetired }],
    queryFn: () => api.get<InstrumentList>(`/api/instruments${qs({ pageSize: 200, includeRetired: includeRetired ? 'true' : undefined })}`),
  });
export const useInstruments = (includeRetired = false) => useQuery(getInstrumentsQueryOptions(includeRetired));
