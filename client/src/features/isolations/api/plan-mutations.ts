import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { SavePlanInput } from '@shared/schemas/isolation.schema';
import type { IsolationPlan, PlanProposal } from '@shared/types/isolations';
import { api, qs } from '@client/lib/api-client';
import { isolationPlanKey } from './get-isolation-plan';

/** A first plan for the cut (valves either side, vents and drains between, a plug each side); nothing is saved. */
export function useProposePlan(permitId: string) {
  return useMutation({
    mutationFn: ({ fromPosition, toPosition }: { fromPosition: number; toPosition: number }) =>
      api.get<PlanProposal>(`/api/permits/${encodeURIComponent(permitId)}/isolations/proposal${qs({ fromPosition, toPosition })}`),
  });
}

export function useSavePlan(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: SavePlanInput) => api.put<IsolationPlan>(`/api/permits/${encodeURIComponent(permitId)}/isolations`, input),
    onSuccess: (plan) => {
      qc.setQueryData(isolationPlanKey(permitId), plan);
      // Saving bumps the permit's version: fetch it again so the next save sends the new one.
      return qc.invalidateQueries({ queryKey: ['permits', 'detail', permitId] });
    },
  });
}
