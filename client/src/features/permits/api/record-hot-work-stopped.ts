import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions } from './get-permit';
import { permitsListKey } from './get-permits';

/** Hot work has stopped: the server starts the fire watch from now. */
export const recordHotWorkStopped = (id: string) => api.post<PermitDetail>(`/api/permits/${encodeURIComponent(id)}/hot-work-stopped`);

export function useRecordHotWorkStopped(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => recordHotWorkStopped(id),
    onSuccess: (permit) => {
      qc.setQueryData(getPermitQueryOptions(id).queryKey, permit);
      return qc.invalidateQueries({ queryKey: permitsListKey });
    },
  });
}
