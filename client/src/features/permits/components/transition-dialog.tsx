import { useMemo } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { transitionInputSchema } from '@shared/schemas/permit.schema';
import { signatureMessages, signedNameMatches } from '@shared/permit/signed-name';
import type { PermitAction, PermitDetail } from '@shared/types/permits';
import { isoToWallTime, wallTimeToIso } from '@shared/time/zone';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { ModalDialog } from '@client/components/ui/dialog';
import { TextAreaField, TextField } from '@client/components/ui/field';
import { Notice } from '@client/components/ui/notice';
import { useTransitionPermit } from '../api/transition-permit';
import { eventExplanations, irreversibleNotes } from '../lib/transition-copy';

type DialogValues = { reason?: string; password?: string; signedName?: string; validTo?: string };

export type TransitionOutcome = { kind: 'done'; permit: PermitDetail } | { kind: 'conflict'; message: string } | { kind: 'refused'; reasons: string[] };

interface Props {
  action: PermitAction;
  permit: PermitDetail;
  userName: string;
  timeZone: string;
  onClose: () => void;
  onOutcome: (outcome: TransitionOutcome) => void;
}


/** Confirms one permit action: asks for a reason or a signature when the step needs one, and says when it cannot be undone. */
export function TransitionDialog({ action, permit, userName, timeZone, onClose, onOutcome }: Props) {
  const transition = useTransitionPermit(permit.id);
  const needsEnd = action.event === 'revalidate';
  const schema = useMemo(
    () =>
      transitionInputSchema.pick({ reason: true, password: true, signedName: true, validTo: true }).superRefine((v, ctx) => {
        if (action.needsReason && (v.reason ?? '').trim().length < 3) ctx.addIssue({ code: 'custom', path: ['reason'], message: 'Give a reason in words (at least 3 characters).' });
        if (action.needsSignature) {
          if (!v.password) ctx.addIssue({ code: 'custom', path: ['password'], message: signatureMessages.passwordMissing });
          if (!signedNameMatches(v.signedName, userName)) ctx.addIssue({ code: 'custom', path: ['signedName'], message: signatureMessages.name(userName) });
        }
        if (needsEnd && !v.validTo) ctx.addIssue({ code: 'custom', path: ['validTo'], message: 'Give the new end of the validity window.' });
      }),
    [action.needsReason, action.needsSignature, needsEnd, userName],
  );
  const form = useForm<DialogValues>({ resolver: zodResolver(schema), defaultValues: { reason: '', password: '', signedName: '', validTo: undefined } });
  const irreversible = irreversibleNotes[action.event];

  const submit = form.handleSubmit(async (v) => {
    try {
      const permitAfter = await transition.mutateAsync({
        event: action.event,
        version: permit.version,
        reason: action.needsReason && v.reason ? v.reason : undefined,
        password: action.needsSignature ? v.password : undefined,
        signedName: action.needsSignature ? v.signedName : undefined,
        validTo: needsEnd ? v.validTo : undefined,
      });
      onOutcome({ kind: 'done', permit: permitAfter });
    } catch (err) {
      if (!(err instanceof ApiError)) throw err;
      if (err.status === 409) return onOutcome({ kind: 'conflict', message: err.message });
      if (err.status === 422) return onOutcome({ kind: 'refused', reasons: err.details.length ? err.details.map((d) => d.message) : [err.message] });
      const known = ['reason', 'password', 'signedName', 'validTo'] as const;
      let placed = false;
      for (const d of err.details) {
        const field = known.find((k) => k === d.path);
        if (field) {
          form.setError(field, { type: 'server', message: d.message });
          placed = true;
        }
      }
      if (!placed) form.setError('root', { type: 'server', message: err.message });
    }
  });

  const errors = form.formState.errors;
  const firstField = action.needsReason ? 'reason' : needsEnd ? 'validTo' : action.needsSignature ? 'password' : null;

  return (
    <ModalDialog
      title={`${action.label} — ${permit.number}`}
      onClose={onClose}
      description={
        <>
          <p>{eventExplanations[action.event] ?? 'Confirm this step.'}</p>
          {irreversible ? (
            <div className="mt-2">
              <Notice tone="caution" title="This cannot be undone">
                {irreversible}
              </Notice>
            </div>
          ) : null}
        </>
      }
    >
      <form noValidate onSubmit={submit} className="flex flex-col gap-3">
        {action.needsReason ? (
          <TextAreaField label="Reason" rows={3} maxLength={2000} data-autofocus={firstField === 'reason' || undefined} {...form.register('reason')} error={errors.reason?.message} />
        ) : null}
        {needsEnd ? (
          <Controller
            control={form.control}
            name="validTo"
            render={({ field }) => (
              <TextField
                label="New end of the validity window"
                type="datetime-local"
                data-autofocus={firstField === 'validTo' || undefined}
                name={field.name}
                ref={field.ref}
                value={isoToWallTime(field.value, timeZone)}
                onChange={(e) => field.onChange(wallTimeToIso(e.target.value, timeZone))}
                onBlur={field.onBlur}
                error={errors.validTo?.message}
                hint={`Time where the line is (${timeZone}).`}
              />
            )}
          />
        ) : null}
        {action.needsSignature ? (
          <>
            <TextField
              label="Your password"
              type="password"
              autoComplete="current-password"
              data-autofocus={firstField === 'password' || undefined}
              {...form.register('password')}
              error={errors.password?.message}
            />
            <TextField label={`Type your name as it appears: ${userName}`} autoComplete="off" spellCheck={false} {...form.register('signedName')} error={errors.signedName?.message} />
          </>
        ) : null}
        {errors.root?.message ? (
          <Notice tone="danger" role="alert">
            {errors.root.message}
          </Notice>
        ) : null}
        <div className="flex flex-wrap justify-end gap-2">
          <Button type="button" variant="secondary" onClick={onClose} data-autofocus={firstField === null || undefined}>
            Go back
          </Button>
          <Button type="submit" variant={action.event === 'cancel' || action.event === 'suspend' ? 'danger' : 'primary'} busy={form.formState.isSubmitting}>
            {action.needsSignature ? `Sign: ${action.label}` : action.label}
          </Button>
        </div>
      </form>
    </ModalDialog>
  );
}
