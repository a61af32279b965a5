import { useState } from 'react';
import { useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { subject } from '@casl/ability';
import { handoverAcceptSchema, handoverCreateSchema, type HandoverAcceptInput, type HandoverCreateInput } from '@shared/schemas/timed-checks.schema';
import type { HandoverRow } from '@shared/types/timed-checks';
import { formatInZone } from '@shared/time/zone';
import { qualificationForKind, workUnderWayStates } from '@shared/permit/states';
import { qualificationLabels, type QualificationKind } from '@shared/abilities/roles';
import { ApiError } from '@client/lib/api-client';
import { useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { Button } from '@client/components/ui/button';
import { SelectField, TextAreaField, TextField } from '@client/components/ui/field';
import { Card, Loading } from '@client/components/ui/page';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useAcceptHandover, useCreateHandover, useHandovers, useLeads } from '../api/handovers';
import { useRegime } from '../api/get-regime';
import { useSiteTimeZone } from '../lib/site-time';
import type { PermitLike } from '../lib/permit-like';

function SignOut({ permit, userName }: { permit: PermitLike; userName: string }) {
  const me = useMe();
  const leads = useLeads(permit.contractorOrganisationId, true);
  const create = useCreateHandover(permit.id);
  const toast = useToast();
  const form = useForm<HandoverCreateInput>({ resolver: zodResolver(handoverCreateSchema), defaultValues: { toUserId: '', openPoints: '', password: '', signedName: '' } });
  const e = form.formState.errors;
  const others = (leads.data ?? []).filter((l) => l.userId !== me.data?.user.id);
  return (
    <form
      noValidate
      aria-label="Sign the permit over to the next shift"
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit((v) =>
        create.mutate(v, {
          onSuccess: () => {
            toast('success', 'Handover signed; the incoming lead must accept it.');
            form.reset();
          },
          onError: (err) => (err instanceof ApiError && err.details.length ? err.details.forEach((d) => form.setError(d.path as keyof HandoverCreateInput, { message: d.message })) : toast('error', err.message)),
        }),
      )}
    >
      <h3 className="text-lg font-semibold">Hand over to the next shift</h3>
      <SelectField
        label="Incoming contractor lead"
        {...form.register('toUserId')}
        error={e.toUserId?.message}
        hint={`The incoming lead must hold an in-date qualification for: ${[...new Set(permit.kinds.map((k) => qualificationLabels[qualificationForKind[k] as QualificationKind]))].join(', ')}.`}
      >
        <option value="">Choose…</option>
        {others.map((l) => (
          <option key={l.userId} value={l.userId}>
            {l.name}
          </option>
        ))}
      </SelectField>
      <TextAreaField label="Open points for the next shift" {...form.register('openPoints')} error={e.openPoints?.message} hint="What is done, what is left, anything to watch. The latest readings and due checks are added for you." />
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField label="Your password" type="password" autoComplete="current-password" {...form.register('password')} error={e.password?.message} />
        <TextField label={`Type your name (${userName})`} autoComplete="off" {...form.register('signedName')} error={e.signedName?.message} />
      </div>
      <div>
        <Button type="submit" busy={create.isPending}>
          Sign and hand over
        </Button>
      </div>
    </form>
  );
}

function Accept({ permitId, handover, userName }: { permitId: string; handover: HandoverRow; userName: string }) {
  const accept = useAcceptHandover(permitId);
  const toast = useToast();
  const form = useForm<HandoverAcceptInput>({ resolver: zodResolver(handoverAcceptSchema), defaultValues: { password: '', signedName: '' } });
  const e = form.formState.errors;
  return (
    <form
      noValidate
      aria-label="Accept the handover"
      className="flex flex-col gap-3"
      onSubmit={form.handleSubmit((v) =>
        accept.mutate(
          { ...v, handoverId: handover.id },
          {
            onSuccess: () => toast('success', 'You hold the permit now.'),
            onError: (err) => (err instanceof ApiError && err.details.length ? err.details.forEach((d) => form.setError(d.path as keyof HandoverAcceptInput, { message: d.message })) : toast('error', err.message)),
          },
        ),
      )}
    >
      <div className="grid gap-3 sm:grid-cols-2">
        <TextField label="Your password" type="password" autoComplete="current-password" {...form.register('password')} error={e.password?.message} />
        <TextField label={`Type your name (${userName})`} autoComplete="off" {...form.register('signedName')} error={e.signedName?.message} />
      </div>
      <div>
        <Button type="submit" busy={accept.isPending}>
          Accept and take the permit
        </Button>
      </div>
    </form>
  );
}

function HandoverCard({ h, timeZone }: { h: HandoverRow; timeZone: string }) {
  return (
    <div className="flex flex-col gap-1 text-sm">
      <p className="font-semibold">
        {h.fromName} → {h.toName} · signed {formatInZone(h.fromSignedAt, timeZone, 'dayTime')}
        {h.acceptedAt ? ` · accepted ${formatInZone(h.acceptedAt, timeZone, 'dayTime')}` : h.status === 'pending' ? ' · waiting for the incoming lead' : ' · replaced by a later handover'}
      </p>
      <p className="break-words whitespace-pre-line">{h.openPoints}</p>
      <ul className="list-disc pl-5 text-ink-soft">
        {h.readingsSummary.map((line) => (
          <li key={line}>{line}</li>
        ))}
      </ul>
    </div>
  );
}

/** Shift handover: who holds the permit, the pending handover, and the signed history. */
export function HandoverSection({ permit }: { permit: PermitLike }) {
  const ability = useAbility();
  const me = useMe();
  const timeZone = useSiteTimeZone();
  const regime = useRegime(permit.id);
  const handovers = useHandovers(permit.id);
  const [showHistory, setShowHistory] = useState(false);
  const userId = me.data?.user.id;
  const userName = me.data?.user.name ?? '';
  const open = workUnderWayStates.includes(permit.state);
  const mayHandover = ability.can('handover', subject('Permit', { ...permit }));
  const holder = permit.holderUserId ?? permit.contractorLeadUserId;
  const pending = handovers.data?.items.find((h) => h.status === 'pending');
  const past = handovers.data?.items.filter((h) => h.status !== 'pending') ?? [];

  return (
    <Card className="flex min-w-0 flex-col gap-4">
      <h2 className="text-xl font-bold text-brand-strong">Shift handover</h2>
      <p data-testid="permit-holder">
        Held now by <strong>{regime.data?.holder?.name ?? 'nobody yet (the permit has not been accepted)'}</strong>
      </p>
      {handovers.isPending ? <Loading /> : null}
      {pending ? (
        <Notice tone="caution" title="Handover waiting to be accepted" role="status">
          <HandoverCard h={pending} timeZone={timeZone} />
        </Notice>
      ) : null}
      {pending && pending.toUserId === userId && open && mayHandover ? <Accept permitId={permit.id} handover={pending} userName={userName} /> : null}
      {open && mayHandover && holder === userId ? <SignOut permit={permit} userName={userName} /> : null}
      {!open ? <p className="text-sm text-ink-soft">A shift handover is signed while work is live or suspended.</p> : null}
      {past.length ? (
        <div>
          <Button type="button" variant="ghost" aria-expanded={showHistory} onClick={() => setShowHistory((s) => !s)}>
            {showHistory ? 'Hide' : 'Show'} earlier handovers ({past.length})
          </Button>
          {showHistory ? (
            <ul className="mt-2 flex flex-col gap-3">
              {past.map((h) => (
                <li key={h.id} className="rounded-card border border-line p-3">
                  <HandoverCard h={h} timeZone={timeZone} />
                </li>
              ))}
            </ul>
          ) : null}
        </div>
      ) : null}
    </Card>
  );
}
