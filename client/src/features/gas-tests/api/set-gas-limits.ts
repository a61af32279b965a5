import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PermitGasLimitsInput } from '@shared/schemas/gas-tests.schema';
import type { PermitLimitsView } from '@shared/types/gas-tests';
import { api } from '@client/lib/api-client';
import { gasKeys, permitsPrefix } from './keys';

export function useSetGasLimits(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: PermitGasLimitsInput) => api.put<PermitLimitsView>(`/api/permits/${encodeURIComponent(permitId)}/gas-limits`, input),
    onSuccess: () => Promise.all([qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) }), qc.invalidateQueries({ queryKey: permitsPrefix })]),
  });
}
