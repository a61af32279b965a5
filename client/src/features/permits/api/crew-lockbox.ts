import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CrewSignOnInput } from '@shared/schemas/crew.schema';
import type { CrewHandOverInput, CrewLockRemovalInput } from '@shared/schemas/lock-transfer.schema';
import type { RemovalExceptionInput } from '@shared/schemas/isolation.schema';
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

const memberPath = (id: string, userId: string, what: 'removal-exception' | 'remove') => `/api/permits/${encodeURIComponent(id)}/crew/${encodeURIComponent(userId)}/${what}`;
/** An authoriser's signed record that a crew member whose personal lock is on the box is away (OSHA 29 CFR 1910.147(e)(3)). */
export const useCrewRecordException = (id: string) =>
  useCrewMutation(id, ({ userId, body }: { userId: string; body: RemovalExceptionInput }) => api.post<PermitLockbox>(memberPath(id, userId, 'removal-exception'), body));
/** Another of the crew takes the absent person's personal lock off under that record, signing. */
export const useCrewRemoveUnderException = (id: string) =>
  useCrewMutation(id, ({ userId, body }: { userId: string; body: CrewLockRemovalInput }) => api.post<PermitLockbox>(memberPath(id, userId, 'remove'), body));
