import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { subject } from '@casl/ability';
import { crewSignOnStates } from '@shared/permit/states';
import { crewSignOnInputSchema, type CrewSignOnInput } from '@shared/schemas/crew.schema';
import type { PermitDetail } from '@shared/types/permits';
import { formatInZone } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { isQueued } from '@client/lib/outbox/send-or-queue';
import { useAbility } from '@client/lib/ability';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { Card } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useCrewSignOff, useCrewSignOn } from '../api/crew-lockbox';
import { CrewHandOverForm } from './crew-hand-over-form';
import { RecordCrewExceptionForm, RemoveCrewLockForm } from './crew-exception-forms';

/**
 * Group lockout per person (OSHA 29 CFR 1910.147(f)(3)(ii)(D)): who has a personal lock on the
 * permit's lockbox now, and the signed-in person's own Sign on / Sign off. Shown only where the site
 * locks per person.
 */
export function LockboxSection({ permit, userId, userName, timeZone }: { permit: PermitDetail; userId: string; userName: string; timeZone: string }) {
  const ability = useAbility();
  const toast = useToast();
  const signOn = useCrewSignOn(permit.id);
  const signOff = useCrewSignOff(permit.id);
  const form = useForm<CrewSignOnInput>({ resolver: zodResolver(crewSignOnInputSchema), defaultValues: { personalLockNumber: '' } });
  const [handingOver, setHandingOver] = useState(false);
  // The absent-member exception (OSHA 29 CFR 1910.147(e)(3)) open for one person's lock at a time.
  const [exceptionFor, setExceptionFor] = useState<{ userId: string; step: 'record' | 'remove' } | null>(null);
  const box = permit.lockbox;
  if (!box.perPerson) return null;
  const mine = box.crewOn.find((c) => c.userId === userId);
  const maySignOn = !mine && crewSignOnStates.includes(permit.state) && ability.can('sign_on', subject('Permit', { ...permit }));
  const mayRecordException = ability.can('approve', subject('IsolationStep', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId }));
  const mayRemoveForOthers = ability.can('sign_on', subject('Permit', { ...permit }));
  const exceptionMember = exceptionFor && box.crewOn.find((c) => c.userId === exceptionFor.userId);

  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Lockbox</h2>
      <p className="mb-3 text-sm text-ink-soft">
        {box.label ?? 'The lockbox'} holds the keys of this permit&apos;s isolation locks{box.keys.length ? ` (${box.keys.join(', ')})` : ''}. Each person working puts a personal
        lock on it before starting and takes it off when they stop. It opens only when every personal lock is off.
      </p>
      {box.crewOn.length ? (
        <ul className="mb-3 flex flex-col gap-2" aria-label="People signed on">
          {box.crewOn.map((c) => (
            <li key={c.userId} className="flex flex-wrap items-baseline justify-between gap-x-3 rounded-md border border-line p-3">
              <span className="font-semibold break-words">{c.name}</span>
              <span className="text-sm">
                Personal lock <strong className="break-all">{c.personalLockNumber}</strong> · on since {formatInZone(c.signedOnAt, timeZone)}
              </span>
              {c.exception ? (
                <span className="basis-full text-sm font-medium">
                  Exception recorded by {c.exception.authoriserName} on {formatInZone(c.exception.recordedAt, timeZone)}: {c.name} is away, and another of the crew may take this lock off and sign for it.
                </span>
              ) : null}
              {c.userId !== userId && !c.exception && mayRecordException ? (
                <Button type="button" variant="secondary" className="mt-2 w-full sm:w-auto" onClick={() => setExceptionFor({ userId: c.userId, step: 'record' })}>
                  Record exception for {c.name}&apos;s lock
                </Button>
              ) : null}
              {c.userId !== userId && c.exception && c.exception.authoriserId !== userId && mayRemoveForOthers ? (
                <Button type="button" variant="danger" className="mt-2 w-full sm:w-auto" onClick={() => setExceptionFor({ userId: c.userId, step: 'remove' })}>
                  Remove {c.name}&apos;s lock under the exception
                </Button>
              ) : null}
            </li>
          ))}
        </ul>
      ) : (
        <p className="mb-3 text-sm font-medium">Nobody is signed on.</p>
      )}
      {exceptionMember && exceptionFor.step === 'record' && !exceptionMember.exception ? (
        <div className="mb-3">
          <RecordCrewExceptionForm permitId={permit.id} member={exceptionMember} signer={userName} timeZone={timeZone} onDone={() => setExceptionFor(null)} />
        </div>
      ) : exceptionMember && exceptionFor.step === 'remove' && exceptionMember.exception ? (
        <div className="mb-3">
          <RemoveCrewLockForm permitId={permit.id} member={exceptionMember} signer={userName} onDone={() => setExceptionFor(null)} />
        </div>
      ) : null}
      {mine && handingOver ? (
        <CrewHandOverForm permitId={permit.id} signer={userName} myLock={mine.personalLockNumber} onDone={() => setHandingOver(false)} />
      ) : mine ? (
        <div className="flex flex-col gap-2 sm:flex-row">
          <Button type="button" className="w-full sm:w-auto" onClick={() => setHandingOver(true)}>
            Hand over my lock
          </Button>
          <Button
            type="button"
            variant="secondary"
            className="w-full sm:w-auto"
            busy={signOff.isPending}
            onClick={() =>
              signOff.mutate(undefined, {
                onSuccess: (result) =>
                  toast('success', isQueued(result) ? 'Saved on this device; it will send when you have signal.' : `Signed off: take personal lock ${mine.personalLockNumber} off the lockbox.`),
                onError: (e) => toast('error', e.message),
              })
            }
          >
            Sign off (remove my lock {mine.personalLockNumber})
          </Button>
        </div>
      ) : maySignOn ? (
        <form
          noValidate
          className="flex flex-col gap-3 sm:flex-row sm:items-end"
          onSubmit={form.handleSubmit((v) =>
            signOn.mutate(v, {
              onSuccess: (result) => {
                toast('success', isQueued(result) ? 'Saved on this device; it will send when you have signal.' : `Signed on with personal lock ${v.personalLockNumber}.`);
                form.reset();
              },
              onError: (e) =>
                e instanceof ApiError && e.details.length
                  ? e.details.forEach((d) => form.setError('personalLockNumber', { message: d.message }))
                  : form.setError('personalLockNumber', { message: e.message }),
            }),
          )}
        >
          <div className="min-w-0 flex-1">
            <TextField label="Your personal lock number" autoComplete="off" {...form.register('personalLockNumber')} error={form.formState.errors.personalLockNumber?.message} />
          </div>
          <Button type="submit" busy={signOn.isPending} className="w-full sm:w-auto">
            Sign on
          </Button>
        </form>
      ) : null}
    </Card>
  );
}
