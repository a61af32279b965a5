import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { UpdatePermitInput } from '@shared/schemas/permit.schema';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions } from './get-permit';
import { permitsListKey } from './get-permits';

/** PATCH a draft; the server refuses a stale `version` with 409. */
export const updatePermit = (id: string, input: UpdatePermitInput) => api.patch<PermitDetail>(`/api/permits/${encodeURIComponent(id)}`, input);

export function useUpdatePermit(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UpdatePermitInput) => updatePermit(id, input),
    onSuccess: (permit) => {
      qc.setQueryData(getPermitQueryOptions(id).queryKey, permit);
      return qc.invalidateQueries({ queryKey: permitsListKey });
    },
  });
}
