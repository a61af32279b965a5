import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { GasTestRow } from '@shared/types/gas-tests';
import { api, qs } from '@client/lib/api-client';
import { gasKeys } from './keys';

const base = (permitId: string) => `/api/permits/${encodeURIComponent(permitId)}/gas-tests`;

export const getGasTestsQueryOptions = (permitId: string, page: number) =>
  queryOptions({
    queryKey: gasKeys.tests(permitId, page),
    queryFn: () => api.get<Page<GasTestRow>>(`${base(permitId)}${qs({ page, pageSize: 10 })}`),
    placeholderData: keepPreviousData,
  });
export const useGasTests = (permitId: string, page: number) => useQuery(getGasTestsQueryOptions(permitId, page));

/** The chart shows at most this many readings: the newest ones. */
export const GAS_SERIES_LIMIT = 500;

/** The latest readings (at most GAS_SERIES_LIMIT), oldest first, for the chart: one request, newest page reversed. */
export async function fetchGasSeries(permitId: string): Promise<GasTestRow[]> {
  const newest = await api.get<Page<GasTestRow>>(`${base(permitId)}${qs({ page: 1, pageSize: GAS_SERIES_LIMIT, dir: 'desc' })}`);
  return [...newest.items].reverse();
}

export const getGasSeriesQueryOptions = (permitId: string) =>
  queryOptions({ queryKey: gasKeys.series(permitId), queryFn: () => fetchGasSeries(permitId) });
export const useGasSeries = (permitId: string) => useQuery(getGasSeriesQueryOptions(permitId));
