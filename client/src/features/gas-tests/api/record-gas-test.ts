import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { GasTestData } from '@shared/schemas/gas-tests.schema';
import type { GasTestResult } from '@shared/types/gas-tests';
import { api } from '@client/lib/api-client';
import { gasKeys, permitsPrefix } from './keys';

export const recordGasTest = (permitId: string, input: GasTestData) => api.post<GasTestResult>(`/api/permits/${encodeURIComponent(permitId)}/gas-tests`, input);

export function useRecordGasTest(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: GasTestData) => recordGasTest(permitId, input),
    onSuccess: () => Promise.all([qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) }), qc.invalidateQueries({ queryKey: permitsPrefix })]),
  });
}
