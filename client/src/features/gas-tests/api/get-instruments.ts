import { queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { InstrumentRow } from '@shared/schemas/gas-tests.schema';
import { api, qs } from '@client/lib/api-client';
import { gasKeys } from './keys';

export const getInstrumentsQueryOptions = (includeRetired = false) =>
  queryOptions({
    queryKey: [...gasKeys.instruments, { includeRetired }],
    queryFn: () => api.get<Page<InstrumentRow> & { requireDailyBumpTest: boolean }>(`/api/instruments${qs({ pageSize: 200, includeRetired: includeRetired ? 'true' : undefined })}`),
  });
export const useInstruments = (includeRetired = false) => useQuery(getInstrumentsQueryOptions(includeRetired));
