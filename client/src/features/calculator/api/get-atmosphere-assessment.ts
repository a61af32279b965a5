import { queryOptions, useQuery } from '@tanstack/react-query';
import type { AtmosphereRequest } from '@shared/schemas/calc.schema';
import type { AtmosphereResponse } from '@shared/types/calc';
import { api } from '@client/lib/api-client';

// A POST because the readings travel as a body, but it changes nothing, so it is cached like a read.
// Kept for a minute only: a tenant admin may tighten the limits meanwhile.
export const getAtmosphereAssessmentQueryOptions = (input: AtmosphereRequest) =>
  queryOptions({
    queryKey: ['calc', 'atmosphere', input],
    queryFn: () => api.post<AtmosphereResponse>('/api/calc/atmosphere', input),
    staleTime: 60_000,
  });

export function useAtmosphereAssessment(input: AtmosphereRequest | null) {
  return useQuery({ ...getAtmosphereAssessmentQueryOptions(input ?? { readings: {}, hotWork: false }), enabled: input !== null });
}
