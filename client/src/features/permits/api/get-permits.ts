import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { PermitsQuery } from '@shared/schemas/permit.schema';
import type { PermitSummary } from '@shared/types/permits';
import { api, qs } from '@client/lib/api-client';

/** Every permit list query starts with this key; mutations invalidate it. */
export const permitsListKey = ['permits', 'list'] as const;

export const getPermitsQueryOptions = (params: PermitsQuery) =>
  queryOptions({
    queryKey: [...permitsListKey, params],
    queryFn: () => api.get<Page<PermitSummary>>(`/api/permits${qs({ ...params, state: params.state?.length ? params.state.join(',') : undefined })}`),
    placeholderData: keepPreviousData,
  });

export const usePermits = (params: PermitsQuery) => useQuery(getPermitsQueryOptions(params));
