import { useMutation, useQueryClient } from '@tanstack/react-query';
import { gasTestPlaceLabels, type GasTestData } from '@shared/schemas/gas-tests.schema';
import type { GasTestResult } from '@shared/types/gas-tests';
import { api } from '@client/lib/api-client';
import { sendOrQueue } from '@client/lib/outbox/send-or-queue';
import { gasKeys, permitsPrefix } from './keys';

const gasTestsPath = (permitId: string) => `/api/permits/${encodeURIComponent(permitId)}/gas-tests`;
export const recordGasTest = (permitId: string, input: GasTestData, idempotencyKey?: string) => api.post<GasTestResult>(gasTestsPath(permitId), input, { idempotencyKey });

/** Offline, the test is kept on the device with the time it was taken and sent when there is signal. */
export function useRecordGasTest(permitId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: GasTestData) =>
      sendOrQueue(
        {
          kind: 'gas_test',
          title: `Gas test, ${gasTestPlaceLabels[input.place].toLowerCase()}`,
          permitId,
          path: gasTestsPath(permitId),
          body: input,
          observedAt: input.testedAt,
          invalidate: [gasKeys.permit(permitId), permitsPrefix],
        },
        (key) => recordGasTest(permitId, input, key),
      ),
    // Not awaited: the form gets the save's answer at once, not after the permit's pages have been read again.
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) });
      void qc.invalidateQueries({ queryKey: permitsPrefix });
    },
  });
}
