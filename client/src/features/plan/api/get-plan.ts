import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import type { PlanQuery } from '@shared/schemas/plan.schema';
import type { PlanAnswer } from '@shared/types/plan';
import { api, qs } from '@client/lib/api-client';

export const planKey = ['plan'] as const;

export const getPlanQueryOptions = (filters: PlanQuery) =>
  queryOptions({
    queryKey: [...planKey, filters],
    queryFn: () => api.get<PlanAnswer>(`/api/plan${qs({ from: filters.from, to: filters.to, pipelineId: filters.pipelineId, contractorId: filters.contractorId })}`),
    placeholderData: keepPreviousData,
  });

export const usePlan = (filters: PlanQuery) => useQuery(getPlanQueryOptions(filters));
