import { queryOptions, useQuery } from '@tanstack/react-query';
import type { LineFill } from '@shared/calc';
import type { LineFillQuery } from '@shared/schemas/calc.schema';
import { api, qs } from '@client/lib/api-client';

export const getLineFillQueryOptions = (q: LineFillQuery) =>
  queryOptions({
    queryKey: ['calc', 'line-fill', q],
    queryFn: () => api.get<LineFill>(`/api/calc/line-fill${qs(q)}`),
    staleTime: Infinity,
  });

export function useLineFill(q: LineFillQuery | null) {
  return useQuery({ ...getLineFillQueryOptions(q ?? { idIn: 0, lengthFt: 0 }), enabled: q !== null });
}
