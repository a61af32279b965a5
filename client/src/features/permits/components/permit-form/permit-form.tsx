import { useEffect, useRef, useState } from 'react';
import { Link } from 'react-router-dom';
import { useForm, type FieldErrors } from 'react-hook-form';
import { zodResolver } from '@hookform/resolvers/zod';
import { createPermitInputSchema, type CreatePermitData, type CreatePermitInput } from '@shared/schemas/permit.schema';
import type { LocationUnit } from '@shared/schemas/assets.schema';
import { ApiError } from '@client/lib/api-client';
import { Button } from '@client/components/ui/button';
import { Notice, SafetyCaution } from '@client/components/ui/notice';
import { useToast } from '@client/components/ui/toast';
import { fieldOfPath, firstStepWith, formSteps, type PermitField } from '../../lib/form-steps';
import { linkButtonClass } from '../link-button';
import { JobStep } from './job-step';
import { PlaceStep } from './place-step';
import { TimeCrewStep } from './time-crew-step';
import { MethodStep } from './method-step';
import { ReviewStep } from './review-step';
import type { PermitFormApi } from './types';

interface Props {
  defaultValues: CreatePermitInput;
  timeZone: string;
  unit: LocationUnit;
  ownOrganisationIds: string[];
  submitLabel: string;
  cancelTo: string;
  /** Saves the values; an ApiError with details is mapped back onto the fields. */
  onSave: (values: CreatePermitData) => Promise<unknown>;
}

function StepList({ current }: { current: number }) {
  return (
    <ol className="mb-4 flex flex-wrap gap-2 text-sm" aria-label="Steps">
      {formSteps.map((s, i) => (
        <li
          key={s.key}
          aria-current={i === current ? 'step' : undefined}
          className={`flex items-center gap-2 rounded-full border px-3 py-1 ${i === current ? 'border-brand bg-brand text-white' : i < current ? 'border-brand bg-brand-soft' : 'border-line bg-surface'}`}
        >
          <span className="font-semibold">{i + 1}</span>
          <span className={i === current ? '' : 'hidden sm:inline'}>{s.title}</span>
        </li>
      ))}
    </ol>
  );
}

/** The permit request, one step at a time; each step checks its own fields before moving on. */
export function PermitForm({ defaultValues, timeZone, unit, ownOrganisationIds, submitLabel, cancelTo, onSave }: Props) {
  const form: PermitFormApi = useForm<CreatePermitInput, unknown, CreatePermitData>({
    resolver: zodResolver(createPermitInputSchema),
    defaultValues,
    mode: 'onTouched',
  });
  const toast = useToast();
  const [step, setStep] = useState(0);
  const [otherProblems, setOtherProblems] = useState<string[]>([]);
  const focusAfterStep = useRef<PermitField | 'heading' | null>(null);
  const headingRef = useRef<HTMLHeadingElement>(null);
  const last = formSteps.length - 1;

  useEffect(() => {
    const target = focusAfterStep.current;
    focusAfterStep.current = null;
    if (target === 'heading') headingRef.current?.focus();
    else if (target) form.setFocus(target);
  }, [step, form]);

  const goTo = (i: number, focus: PermitField | 'heading' = 'heading') => {
    focusAfterStep.current = focus;
    setStep(i);
  };

  const next = async () => {
    const fields = formSteps[step].fields;
    if (await form.trigger(fields, { shouldFocus: true })) goTo(Math.min(step + 1, last));
  };

  const showFirstError = (names: string[]) => {
    const i = firstStepWith(names);
    if (i >= 0) goTo(i, formSteps[i].fields.find((f) => names.includes(f)));
  };

  const onInvalid = (errors: FieldErrors<CreatePermitInput>) => showFirstError(Object.keys(errors));

  const onValid = async (values: CreatePermitData) => {
    setOtherProblems([]);
    try {
      await onSave(values);
    } catch (err) {
      if (!(err instanceof ApiError)) throw err;
      const mapped: string[] = [];
      const rest: string[] = [];
      for (const d of err.details) {
        const field = fieldOfPath(d.path);
        if (field) {
          form.setError(field, { type: 'server', message: d.message });
          mapped.push(field);
        } else rest.push(d.message);
      }
      setOtherProblems(rest);
      toast('error', err.message);
      if (mapped.length) showFirstError(mapped);
    }
  };

  return (
    <form
      noValidate
      onSubmit={(e) => {
        // Enter in a field before the last step means "Next", never "save now".
        if (step < last) {
          e.preventDefault();
          void next();
          return;
        }
        void form.handleSubmit(onValid, onInvalid)(e);
      }}
      className="flex flex-col gap-4"
    >
      <SafetyCaution>Request only work you have assessed on site. </SafetyCaution>
      <StepList current={step} />
      <section aria-labelledby="permit-step-heading" className="rounded-card border border-line bg-surface p-4">
        <h2 id="permit-step-heading" ref={headingRef} tabIndex={-1} className="mb-3 text-lg font-semibold">
          Step {step + 1} of {formSteps.length}: {formSteps[step].title}
        </h2>
        {step === 0 ? <JobStep form={form} /> : null}
        {step === 1 ? <PlaceStep form={form} unit={unit} /> : null}
        {step === 2 ? <TimeCrewStep form={form} timeZone={timeZone} ownOrganisationIds={ownOrganisationIds} /> : null}
        {step === 3 ? <MethodStep form={form} /> : null}
        {step === 4 ? <ReviewStep form={form} unit={unit} timeZone={timeZone} goTo={(i) => goTo(i)} /> : null}
      </section>
      {otherProblems.length ? (
        <Notice tone="danger" role="alert" title="The server refused the permit">
          <ul className="list-disc pl-5">
            {otherProblems.map((m) => (
              <li key={m}>{m}</li>
            ))}
          </ul>
        </Notice>
      ) : null}
      <div className="flex flex-wrap items-center gap-2">
        {step > 0 ? (
          <Button type="button" variant="secondary" onClick={() => goTo(step - 1)}>
            Back
          </Button>
        ) : null}
        {/* Separate keys: reusing one <button> and flipping its type to "submit" mid-click would save the form the moment Review opens. */}
        {step < last ? (
          <Button key="next" type="button" onClick={next}>
            Next
          </Button>
        ) : (
          <Button key="save" type="submit" busy={form.formState.isSubmitting}>
            {submitLabel}
          </Button>
        )}
        <Link to={cancelTo} className={`${linkButtonClass.secondary} ml-auto`}>
          Cancel
        </Link>
      </div>
    </form>
  );
}
