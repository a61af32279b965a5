import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { z } from 'zod';
import type { checklistUpdateSchema } from '@shared/schemas/permit.schema';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions } from './get-permit';

export type ChecklistUpdate = z.infer<typeof checklistUpdateSchema>;

export const updateChecklist = (id: string, input: ChecklistUpdate) => api.post<PermitDetail>(`/api/permits/${encodeURIComponent(id)}/checklist`, input);

export function useUpdateChecklist(id: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: ChecklistUpdate) => updateChecklist(id, input),
    onSuccess: (permit) => qc.setQueryData(getPermitQueryOptions(id).queryKey, permit),
  });
}
