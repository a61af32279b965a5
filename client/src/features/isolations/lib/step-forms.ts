import { z } from 'zod';
import { asBuiltLineStopSchema, asBuiltPlugSchema, planStepSchema, type ApplyStepInput, type AsBuiltLineStop, type StepKind } from '@shared/schemas/isolation.schema';
import { takesLock } from '@shared/isolations/step-rules';

const optionalNumber = z.number().optional();

/**
 * The apply form as typed: ids as chosen in selects ('' for none), the time as wall time, the plug
 * weights as numbers, and the reason when an earlier step of the plan is not on yet (`outOfOrder`).
 * `toApplyInput` turns it into ApplyStepInput; the server checks that again.
 */
export const applyFormSchema = (kind: StepKind, outOfOrder = false) =>
  z
    .object({
      lockId: z.string(),
      tagId: z.string(),
      appliedAt: z.string().min(1, 'Give the time the isolation was made.'),
      bentoniteLb: optionalNumber,
      waterLb: optionalNumber,
      lengthIn: optionalNumber,
      outOfOrderReason: z.string().optional(),
      lineStopDevice: z.string().optional(),
      lineStopSizeIn: optionalNumber,
      lineStopSetPressure: optionalNumber,
      lineStopSetPressureUnit: z.string().optional(),
      lineStopSetPosition: z.string().optional(),
    })
    .superRefine((v, ctx) => {
      if (outOfOrder && !v.outOfOrderReason?.trim()) ctx.addIssue({ code: 'custom', path: ['outOfOrderReason'], message: "Give the reason for applying this one out of the plan's order." });
      if (takesLock(kind)) {
        if (!v.lockId) ctx.addIssue({ code: 'custom', path: ['lockId'], message: 'Choose the lock you put on.' });
        if (!v.tagId) ctx.addIssue({ code: 'custom', path: ['tagId'], message: 'Choose the danger tag you hung.' });
      }
      if (kind === 'line_stop') {
        const r = asBuiltLineStopSchema.safeParse(lineStopOf(v));
        if (!r.success) for (const issue of r.error.issues) ctx.addIssue({ code: 'custom', path: [lineStopFields[String(issue.path[0])] ?? 'lineStopDevice'], message: issue.message });
      }
      if (kind !== 'plug') return;
      for (const field of ['bentoniteLb', 'waterLb', 'lengthIn'] as const) {
        const r = asBuiltPlugSchema.shape[field].safeParse(v[field]);
        if (!r.success) ctx.addIssue({ code: 'custom', path: [field], message: r.error.issues[0].message });
      }
    });
export type ApplyForm = z.infer<ReturnType<typeof applyFormSchema>>;

/** The line stop's record as the server names it → the form's fields. */
const lineStopFields: Record<string, keyof ApplyForm> = {
  device: 'lineStopDevice',
  sizeIn: 'lineStopSizeIn',
  setPressure: 'lineStopSetPressure',
  setPressureUnit: 'lineStopSetPressureUnit',
  setPosition: 'lineStopSetPosition',
};

/** A line stop or mechanical plug as set, from the form: empty fields are not given. */
function lineStopOf(v: Pick<ApplyForm, 'lineStopDevice' | 'lineStopSizeIn' | 'lineStopSetPressure' | 'lineStopSetPressureUnit' | 'lineStopSetPosition'>): Partial<AsBuiltLineStop> {
  return {
    device: v.lineStopDevice ?? '',
    sizeIn: v.lineStopSizeIn,
    ...(v.lineStopSetPressure !== undefined ? { setPressure: v.lineStopSetPressure, setPressureUnit: (v.lineStopSetPressureUnit || undefined) as AsBuiltLineStop['setPressureUnit'] } : {}),
    ...(v.lineStopSetPosition?.trim() ? { setPosition: v.lineStopSetPosition.trim() } : {}),
  };
}

export function toApplyInput(kind: StepKind, v: ApplyForm, appliedAtIso: string): ApplyStepInput {
  const input: ApplyStepInput = { appliedAt: appliedAtIso };
  if (v.lockId) input.lockId = v.lockId;
  if (v.tagId) input.tagId = v.tagId;
  if (kind === 'plug') input.asBuilt = { bentoniteLb: v.bentoniteLb!, waterLb: v.waterLb!, lengthIn: v.lengthIn! };
  if (kind === 'line_stop') input.lineStop = lineStopOf(v) as AsBuiltLineStop;
  if (v.outOfOrderReason?.trim()) input.outOfOrderReason = v.outOfOrderReason.trim();
  return input;
}

/** The server's paths for an apply ("asBuilt.lengthIn") → the form's fields. */
export const applyFieldOf = (path: string): keyof ApplyForm | null => {
  if (path.startsWith('lineStop')) return lineStopFields[path.replace(/^lineStop\.?/, '')] ?? 'lineStopDevice';
  const field = path.replace(/^asBuilt\./, '');
  return (['lockId', 'tagId', 'appliedAt', 'bentoniteLb', 'waterLb', 'lengthIn', 'outOfOrderReason'] as const).find((f) => f === field) ?? null;
};

/** A temporary plug or blind the planner adds by hand; the shared plan-step schema checks it. */
export const tempStepSchema = planStepSchema;

/** Empty inputs are "not given", not zero or an empty string. */
export const numberOrUndefined = (v: unknown) => (v === '' || v === null || v === undefined || Number.isNaN(Number(v)) ? undefined : Number(v));
export const textOrUndefined = (v: unknown) => (typeof v === 'string' && v.trim() === '' ? undefined : v);
