import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { Page } from '@shared/schemas/common.schema';
import type { PermitSummary, PermitsQuery } from '@shared/schemas/permit.schema';
import type { PermitState, WorkKind } from '@shared/permit/states';
import { api, qs } from '@client/lib/api-client';

export interface PermitsParams {
  page: number;
  pageSize?: number;
  state?: PermitState[];
  pipelineId?: string;
  contractorOrganisationId?: string;
  kind?: WorkKind;
  from?: string;
  to?: string;
  q?: string;
  sort?: PermitsQuery['sort'];
  dir?: PermitsQuery['dir'];
}

/** Every permit list query starts with this key; mutations invalidate it. */
export const permitsListKey = ['permits', 'list'] as const;

export const getPermitsQueryOptions = (params: PermitsParams) =>
  queryOptions({
    queryKey: [...permitsListKey, params],
    queryFn: () => api.get<Page<PermitSummary>>(`/api/permits${qs({ ...params, state: params.state?.length ? params.state.join(',') : undefined })}`),
    placeholderData: keepPreviousData,
  });

export const usePermits = (params: PermitsParams) => useQuery(getPermitsQueryOptions(params));
