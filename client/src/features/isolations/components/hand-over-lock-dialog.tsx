import { useState } from 'react';
import { useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import type { IsolationStep } from '@shared/types/isolations';
import { Button } from '@client/components/ui/button';
import { SelectField } from '@client/components/ui/field';
import { emptyHandOverSignatures, handOverFieldOf, handOverSignatureBody, handOverSignatureFields, HandOverSignatures } from '@client/components/ui/hand-over-signatures';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { ModalDialog } from '@client/components/ui/dialog';
import { useInStore } from '../api/get-inventory';
import { useTransferLock } from '../api/transfer-lock';
import { placeServerErrors } from '../lib/server-errors';

const formSchema = (signer: string, needsLock: boolean, needsTag: boolean) =>
  z.object({
    lockId: needsLock ? z.string().min(1, 'Choose the lock the person taking over puts on.') : z.string(),
    tagId: needsTag ? z.string().min(1, 'Choose the danger tag the person taking over hangs.') : z.string(),
    ...handOverSignatureFields(signer),
  });
type HandOverForm = z.infer<ReturnType<typeof formSchema>>;

const fieldOf: Record<string, Path<HandOverForm>> = { lockId: 'lockId', tagId: 'tagId', ...handOverFieldOf };

/**
 * Shift change on one isolation (OSHA 29 CFR 1910.147(f)(4)): both people at the point, the oncoming
 * person's own lock and tag go on as the holder's come off, and each signs with their own password.
 */
export function HandOverLockDialog({ permitId, step, signer, onClose }: { permitId: string; step: IsolationStep; signer: string; onClose: () => void }) {
  const transfer = useTransferLock();
  const toast = useToast();
  const locks = useInStore('lock');
  const tags = useInStore('tag');
  const [problem, setProblem] = useState<string | null>(null);
  const needsLock = step.lockId !== null;
  const needsTag = step.tagId !== null;
  const form = useForm<HandOverForm>({
    resolver: zodResolver(formSchema(signer, needsLock, needsTag)),
    defaultValues: { lockId: '', tagId: '', ...emptyHandOverSignatures },
  });
  const { register, formState, handleSubmit, setError } = form;
  const errors = formState.errors;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    try {
      await transfer.mutateAsync({
        permitId,
        stepId: step.id,
        body: {
          ...(needsLock ? { lockId: v.lockId } : {}),
          ...(needsTag ? { tagId: v.tagId } : {}),
          ...handOverSignatureBody(v),
        },
      });
    } catch (err) {
      return setProblem(placeServerErrors(err, setError, (p) => fieldOf[p] ?? null));
    }
    toast('success', `${step.label} handed over: the new lock is on and yours is back in the store.`);
    onClose();
  });

  return (
    <ModalDialog
      title={`Hand over ${step.label}`}
      onClose={onClose}
      description={
        <p>
          Shift change: the person taking over puts their own lock{needsTag ? ' and tag' : ''} on {step.label} and yours comes off at the same moment. Both of you are here and both
          sign. From then on only they take it off.
        </p>
      }
    >
      <form noValidate className="flex flex-col gap-3" onSubmit={submit}>
        {problem ? (
          <Notice tone="danger" title="Not handed over" role="alert">
            {problem}
          </Notice>
        ) : null}
        {needsLock ? (
          <SelectField label="Their lock" {...register('lockId')} error={errors.lockId?.message} data-autofocus>
            <option value="">{locks.isPending ? 'Loading locks…' : 'Choose a lock…'}</option>
            {locks.data?.items.map((l) => (
              <option key={l.id} value={l.id}>
                {l.number}
              </option>
            ))}
          </SelectField>
        ) : null}
        {needsTag ? (
          <SelectField label="Their danger tag" {...register('tagId')} error={errors.tagId?.message}>
            <option value="">{tags.isPending ? 'Loading tags…' : 'Choose a tag…'}</option>
            {tags.data?.items.map((t) => (
              <option key={t.id} value={t.id}>
                {t.number}
              </option>
            ))}
          </SelectField>
        ) : null}
        <HandOverSignatures register={register} errors={errors} />
        <div className="flex flex-wrap justify-end gap-2">
          <Button type="button" variant="secondary" onClick={onClose}>
            Cancel
          </Button>
          <Button type="submit" busy={transfer.isPending}>
            Hand over
          </Button>
        </div>
      </form>
    </ModalDialog>
  );
}
