import { useState } from 'react';
import { useForm, type Path } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { z } from 'zod';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { TextField } from '@client/components/ui/field';
import { emptyHandOverSignatures, handOverFieldOf, handOverSignatureBody, handOverSignatureFields, HandOverSignatures } from '@client/components/ui/hand-over-signatures';
import { Notice } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { useCrewHandOver } from '../api/crew-lockbox';

const formSchema = (signer: string) =>
  z.object({
    personalLockNumber: z.string().trim().min(1, 'Give the number of their personal lock.').max(40),
    ...handOverSignatureFields(signer),
  });
type HandOverForm = z.infer<ReturnType<typeof formSchema>>;

const fieldOf: Record<string, Path<HandOverForm>> = { personalLockNumber: 'personalLockNumber', ...handOverFieldOf };

/**
 * Shift change on the lockbox (OSHA 29 CFR 1910.147(f)(4)): the person taking over puts their personal
 * lock on as the signed-in person takes theirs off, both signing here; the box is never left empty.
 */
export function CrewHandOverForm({ permitId, signer, myLock, onDone }: { permitId: string; signer: string; myLock: string; onDone: () => void }) {
  const handOver = useCrewHandOver(permitId);
  const toast = useToast();
  const [problem, setProblem] = useState<string | null>(null);
  const form = useForm<HandOverForm>({
    resolver: zodResolver(formSchema(signer)),
    defaultValues: { personalLockNumber: '', ...emptyHandOverSignatures },
  });
  const { register, formState, handleSubmit, setError } = form;
  const errors = formState.errors;

  const submit = handleSubmit(async (v) => {
    setProblem(null);
    try {
      await handOver.mutateAsync({
        personalLockNumber: v.personalLockNumber.trim(),
        ...handOverSignatureBody(v),
      });
    } catch (err) {
      if (!(err instanceof ApiError)) return setProblem(err instanceof Error ? err.message : 'Something went wrong.');
      let placed = 0;
      for (const d of err.details) if (fieldOf[d.path] && ++placed) setError(fieldOf[d.path], { message: d.message });
      return setProblem(placed && placed === err.details.length ? null : err.message);
    }
    toast('success', `Handed over: take your personal lock ${myLock} off the lockbox now that theirs is on.`);
    onDone();
  });

  return (
    <form noValidate className="flex flex-col gap-3" onSubmit={submit} aria-label="Hand over my lock">
      <p className="text-sm">Both of you at the lockbox: their personal lock goes on as yours ({myLock}) comes off. Each of you signs.</p>
      {problem ? (
        <Notice tone="danger" title="Not handed over" role="alert">
          {problem}
        </Notice>
      ) : null}
      <HandOverSignatures
        register={register}
        errors={errors}
        oncomingFirst={<TextField label="Their personal lock number" autoComplete="off" {...register('personalLockNumber')} error={errors.personalLockNumber?.message} />}
      />
      <div className="flex flex-col gap-2 sm:flex-row sm:justify-end">
        <Button type="button" variant="secondary" className="w-full sm:w-auto" onClick={onDone}>
          Cancel
        </Button>
        <Button type="submit" className="w-full sm:w-auto" busy={handOver.isPending}>
          Hand over
        </Button>
      </div>
    </form>
  );
}
