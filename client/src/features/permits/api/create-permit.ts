import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CreatePermitData } from '@shared/schemas/permit.schema';
import type { PermitDetail } from '@shared/types/permits';
import { api } from '@client/lib/api-client';
import { getPermitQueryOptions } from './get-permit';
import { permitsListKey } from './get-permits';

export const createPermit = (input: CreatePermitData) => api.post<PermitDetail>('/api/permits', input);

export function useCreatePermit() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: createPermit,
    onSuccess: (permit) => {
      qc.setQueryData(getPermitQueryOptions(permit.id).queryKey, permit);
      return qc.invalidateQueries({ queryKey: permitsListKey });
    },
  });
}
