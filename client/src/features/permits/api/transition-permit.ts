import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { TransitionInput } from '@shared/schemas/permit.schema';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions } from './get-permit';
import { permitsListKey } from './get-permits';
import { permitIsolationsKey } from './get-permit-isolations';

export const transitionPermit = (id: string, input: TransitionInput) => api.post<PermitDetail>(`/api/permits/${encodeURIComponent(id)}/transitions`, input);

export function useTransitionPermit(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: TransitionInput) => transitionPermit(id, input),
    onSuccess: (permit) => {
      qc.setQueryData(getPermitQueryOptions(id).queryKey, permit);
      // The isolation plan answers what still blocks Isolated and who signed the isolations in place: a move changes both.
      return Promise.all([qc.invalidateQueries({ queryKey: permitsListKey }), qc.invalidateQueries({ queryKey: permitIsolationsKey(id) })]);
    },
  });
}
