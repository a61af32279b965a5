import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { ReportsQuery } from '@shared/schemas/reports.schema';
import type { ReportsOverview } from '@shared/types/reports';
import { api, qs } from '@client/lib/api-client';

export const reportsKey = ['reports'] as const;

export const getReportsOverviewQueryOptions = (query: ReportsQuery) =>
  queryOptions({
    queryKey: [...reportsKey, 'overview', query.days],
    queryFn: () => api.get<ReportsOverview>(`/api/reports/overview${qs({ days: query.days })}`),
    placeholderData: keepPreviousData,
  });

export const useReportsOverview = (query: ReportsQuery, enabled = true) => useQuery({ ...getReportsOverviewQueryOptions(query), enabled });
