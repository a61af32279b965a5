import { z } from 'zod';
import { asBuiltPlugSchema, planStepSchema, type ApplyStepInput, type StepKind } from '@shared/schemas/isolation.schema';

/** Kinds that take a personal lock and a danger tag when applied (the server requires both). */
export const takesLock = (kind: StepKind) => kind === 'block_valve' || kind === 'isolator';

const optionalNumber = z.number().optional();

/**
 * The apply form as typed: ids as chosen in selects ('' for none), the time as wall time, the plug
 * weights as numbers. `toApplyInput` turns it into ApplyStepInput; the server checks that again.
 */
export const applyFormSchema = (kind: StepKind) =>
  z
    .object({
      lockId: z.string(),
      tagId: z.string(),
      appliedAt: z.string().min(1, 'Give the time the isolation was made.'),
      bentoniteLb: optionalNumber,
      waterLb: optionalNumber,
      lengthIn: optionalNumber,
    })
    .superRefine((v, ctx) => {
      if (takesLock(kind)) {
        if (!v.lockId) ctx.addIssue({ code: 'custom', path: ['lockId'], message: 'Choose the lock you put on.' });
        if (!v.tagId) ctx.addIssue({ code: 'custom', path: ['tagId'], message: 'Choose the danger tag you hung.' });
      }
      if (kind !== 'plug') return;
      for (const field of ['bentoniteLb', 'waterLb', 'lengthIn'] as const) {
        const r = asBuiltPlugSchema.shape[field].safeParse(v[field]);
        if (!r.success) ctx.addIssue({ code: 'custom', path: [field], message: r.error.issues[0].message });
      }
    });
export type ApplyForm = z.infer<ReturnType<typeof applyFormSchema>>;

export function toApplyInput(kind: StepKind, v: ApplyForm, appliedAtIso: string): ApplyStepInput {
  const input: ApplyStepInput = { appliedAt: appliedAtIso };
  if (v.lockId) input.lockId = v.lockId;
  if (v.tagId) input.tagId = v.tagId;
  if (kind === 'plug') input.asBuilt = { bentoniteLb: v.bentoniteLb!, waterLb: v.waterLb!, lengthIn: v.lengthIn! };
  return input;
}

/** The server's paths for an apply ("asBuilt.lengthIn") → the form's fields. */
export const applyFieldOf = (path: string): keyof ApplyForm | null => {
  const field = path.replace(/^asBuilt\./, '');
  return (['lockId', 'tagId', 'appliedAt', 'bentoniteLb', 'waterLb', 'lengthIn'] as const).find((f) => f === field) ?? null;
};

/** A temporary plug or blind the planner adds by hand; the shared plan-step schema checks it. */
export const tempStepSchema = planStepSchema;

/** Empty inputs are "not given", not zero or an empty string. */
export const numberOrUndefined = (v: unknown) => (v === '' || v === null || v === undefined || Number.isNaN(Number(v)) ? undefined : Number(v));
export const textOrUndefined = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);
