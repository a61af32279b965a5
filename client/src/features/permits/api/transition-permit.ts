import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { TransitionInput } from '@shared/schemas/permit.schema';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions, type PermitDetail } from './get-permit';
import { permitsListKey } from './get-permits';

export const transitionPermit = (id: string, input: TransitionInput) => api.post<PermitDetail>(`/api/permits/${encodeURIComponent(id)}/transitions`, input);

export function useTransitionPermit(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: TransitionInput) => transitionPermit(id, input),
    onSuccess: (permit) => {
      qc.setQueryData(getPermitQueryOptions(id).queryKey, permit);
      return qc.invalidateQueries({ queryKey: permitsListKey });
    },
  });
}
