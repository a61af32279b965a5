import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { EndProvingInput, StartProvingInput } from '@shared/schemas/isolation-proving.schema';
import type { IsolationProving } from '@shared/types/isolation-proving';
import { api } from '@client/lib/api-client';
import { boardKey } from './get-board';

const provingsPath = (permitId: string) => `/api/permits/${encodeURIComponent(permitId)}/isolations/provings`;

/** After a hold test is recorded the plan (what still blocks Isolated), the permit's actions and the board are fetched again. */
function useRefetchAfter(permitId: string) {
  const qc = useQueryClient();
  return () => Promise.all([qc.invalidateQueries({ queryKey: ['permits', 'detail', permitId] }), qc.invalidateQueries({ queryKey: boardKey })]);
}

/** POST /api/permits/:id/isolations/provings: the first reading of the section's hold test. */
export function useStartProving(permitId: string) {
  const refetch = useRefetchAfter(permitId);
  return useMutation({
    mutationFn: (body: StartProvingInput) => api.post<IsolationProving>(provingsPath(permitId), body),
    onSettled: refetch,
  });
}

/** POST /api/permits/:id/isolations/provings/:provingId/end: the reading at the end of the hold. */
export function useEndProving(permitId: string) {
  const refetch = useRefetchAfter(permitId);
  return useMutation({
    mutationFn: ({ provingId, body }: { provingId: string; body: EndProvingInput }) => api.post<IsolationProving>(`${provingsPath(permitId)}/${encodeURIComponent(provingId)}/end`, body),
    onSettled: refetch,
  });
}
