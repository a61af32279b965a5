import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { GasTestRow } from '@shared/schemas/gas-tests.schema';
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

/** The latest 500 readings, oldest first, for the chart. */
export const getGasSeriesQueryOptions = (permitId: string) =>
  queryOptions({
    queryKey: gasKeys.series(permitId),
    queryFn: async () => {
      const total = (await api.get<Page<GasTestRow>>(`${base(permitId)}${qs({ page: 1, pageSize: 1 })}`)).total;
      const pageSize = 500;
      const page = Math.max(1, Math.ceil(total / pageSize));
      const last = await api.get<Page<GasTestRow>>(`${base(permitId)}${qs({ page, pageSize, dir: 'asc' })}`);
      return last.items;
    },
  });
export const useGasSeries = (permitId: string) => useQuery(getGasSeriesQueryOptions(permitId));
