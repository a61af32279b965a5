import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { CrewSignOnInput } from '@shared/schemas/crew.schema';
import type { CrewHandOverInput, CrewLockRemovalInput } from '@shared/schemas/lock-transfer.schema';
import type { RemovalExceptionInput } from '@shared/schemas/isolation.schema';
import type { PermitLockbox } from '@shared/types/crew';
import { api } from '@client/lib/api-client';
import { isQueued, newIdempotencyKey, sendOrQueue, type Queued } from '@client/lib/outbox/send-or-queue';
import { permitKey } from './get-permit';

const crewPath = (id: string, what: 'sign-on' | 'sign-off' | 'hand-over') => `/api/permits/${encodeURIComponent(id)}/crew/${what}`;

/** Signing on or off changes what the permit shows (the lockbox, the timeline, whether work may start): read it again. */
function useCrewMutation<T, R = PermitLockbox>(id: string, send: (input: T) => Promise<R>) {
  const qc = useQueryClient();
  return useMutation({ mutationFn: send, onSuccess: (result) => (isQueued(result) ? undefined : qc.invalidateQueries({ queryKey: permitKey(id) })) });
}

/** Signing on or off without signal waits in the outbox; the server records it when it arrives. */
function queueCrew(id: string, what: 'sign-on' | 'sign-off', body: Record<string, unknown>): Promise<PermitLockbox | Queued> {
  const path = crewPath(id, what);
  return sendOrQueue(
    { kind: what === 'sign-on' ? 'crew_sign_on' : 'crew_sign_off', title: what === 'sign-on' ? 'Crew sign-on' : 'Crew sign-off', permitId: id, path, body, observedAt: new Date().toISOString(), invalidate: [permitKey(id)] },
    (key) => api.post<PermitLockbox>(path, body, { idempotencyKey: key }),
  );
}

export const useCrewSignOn = (id: string) => useCrewMutation(id, (input: CrewSignOnInput) => queueCrew(id, 'sign-on', input));
export const useCrewSignOff = (id: string) => useCrewMutation(id, () => queueCrew(id, 'sign-off', {}));
/** Shift change on the lockbox: the oncoming person's personal lock goes on as the signed-in person's comes off, both signing. */
export const useCrewHandOver = (id: string) => useCrewMutation(id, (input: CrewHandOverInput) => api.post<PermitLockbox>(crewPath(id, 'hand-over'), input, { idempotencyKey: newIdempotencyKey() }));

const memberPath = (id: string, userId: string, what: 'removal-exception' | 'remove') => `/api/permits/${encodeURIComponent(id)}/crew/${encodeURIComponent(userId)}/${what}`;
/** An authoriser's signed record that a crew member whose personal lock is on the box is away (OSHA 29 CFR 1910.147(e)(3)). */
export const useCrewRecordException = (id: string) =>
  useCrewMutation(id, ({ userId, body }: { userId: string; body: RemovalExceptionInput }) => api.post<PermitLockbox>(memberPath(id, userId, 'removal-exception'), body));
/** Another of the crew takes the absent person's personal lock off under that record, signing. */
export const useCrewRemoveUnderException = (id: string) =>
  useCrewMutation(id, ({ userId, body }: { userId: string; body: CrewLockRemovalInput }) => api.post<PermitLockbox>(memberPath(id, userId, 'remove'), body));
