import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CrewSignOnInput } from '@shared/schemas/crew.schema';
import type { CrewHandOverInput } from '@shared/schemas/lock-transfer.schema';
import type { PermitLockbox } from '@shared/types/crew';
import { api } from '@client/lib/api-client';
import { permitKey } from './get-permit';

const crewPath = (id: string, what: 'sign-on' | 'sign-off' | 'hand-over') => `/api/permits/${encodeURIComponent(id)}/crew/${what}`;

/** Signing on or off changes what the permit shows (the lockbox, the timeline, whether work may start): read it again. */
function useCrewMutation<T>(id: string, send: (input: T) => Promise<PermitLockbox>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: send, onSuccess: () => qc.invalidateQueries({ queryKey: permitKey(id) }) });
}

export const useCrewSignOn = (id: string) => useCrewMutation(id, (input: CrewSignOnInput) => api.post<PermitLockbox>(crewPath(id, 'sign-on'), input));
export const useCrewSignOff = (id: string) => useCrewMutation(id, () => api.post<PermitLockbox>(crewPath(id, 'sign-off'), {}));
/** Shift change on the lockbox: the oncoming person's personal lock goes on as the signed-in person's comes off, both signing. */
export const useCrewHandOver = (id: string) => useCrewMutation(id, (input: CrewHandOverInput) => api.post<PermitLockbox>(crewPath(id, 'hand-over'), input));
