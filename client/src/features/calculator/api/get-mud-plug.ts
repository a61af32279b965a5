import { queryOptions, useQuery } from '@tanstack/react-query';
import type { MudPlugQuery } from '@shared/schemas/calc.schema';
import type { MudPlugResponse } from '@shared/types/calc';
import { api, qs } from '@client/lib/api-client';

// The answer is a pure function of the inputs, so it never goes stale.
export const getMudPlugQueryOptions = (q: MudPlugQuery) =>
  queryOptions({
    queryKey: ['calc', 'mud-plug', q],
    queryFn: () => api.get<MudPlugResponse>(`/api/calc/mud-plug${qs(q)}`),
    staleTime: Infinity,
  });

/** Nothing is asked while `q` is null (the inputs are not valid yet). */
export function useMudPlug(q: MudPlugQuery | null) {
  return useQuery({ ...getMudPlugQueryOptions(q ?? { diameterIn: 0, waterFraction: 0 }), enabled: q !== null });
}
