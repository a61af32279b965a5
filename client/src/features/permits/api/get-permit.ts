import { queryOptions, useQuery } from '@tanstack/react-query';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';

export const permitKey = (id: string) => ['permits', 'detail', id] as const;

export const getPermitQueryOptions = (id: string) =>
  queryOptions({
    queryKey: permitKey(id),
    queryFn: () => api.get<PermitDetail>(`/api/permits/${encodeURIComponent(id)}`),
  });

export const usePermit = (id: string) => useQuery(getPermitQueryOptions(id));
