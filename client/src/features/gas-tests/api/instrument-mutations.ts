import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { InstrumentInput, InstrumentPatch } from '@shared/schemas/gas-tests.schema';
import type { InstrumentRow } from '@shared/types/gas-tests';
import { api } from '@client/lib/api-client';
import { gasKeys } from './keys';

export function useCreateInstrument() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: (input: InstrumentInput) => api.post<InstrumentRow>('/api/instruments', input), onSuccess: () => qc.invalidateQueries({ queryKey: gasKeys.instruments }) });
}

export function useUpdateInstrument() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: InstrumentPatch }) => api.patch<InstrumentRow>(`/api/instruments/${encodeURIComponent(id)}`, patch),
    onSuccess: () => qc.invalidateQueries({ queryKey: gasKeys.instruments }),
  });
}
