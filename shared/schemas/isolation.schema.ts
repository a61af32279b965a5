import { z } from 'zod';
import { isoDateTimeField, textField, uuidSchema } from './common.schema';

export const stepKinds = ['block_valve', 'vent', 'drain', 'plug', 'blind', 'isolator'] as const;
export type StepKind = (typeof stepKinds)[number];
export const stepConditions = ['closed_locked_tagged', 'drained', 'vent_open', 'plug_built', 'blind_fitted', 'energy_isolated'] as const;
export type StepCondition = (typeof stepConditions)[number];

export const conditionLabels: Record<StepCondition, string> = {
  closed_locked_tagged: 'Closed, locked and tagged',
  drained: 'Section drained',
  vent_open: 'Vent installed and open',
  plug_built: 'Plug built',
  blind_fitted: 'Blind fitted',
  energy_isolated: 'Energy isolated',
};
export const stepKindLabels: Record<StepKind, string> = {
  block_valve: 'Block valve',
  vent: 'Vent',
  drain: 'Drain',
  plug: 'Plug',
  blind: 'Blind',
  isolator: 'Isolator',
};

/** The condition each kind of step must reach. */
export const conditionForKind: Record<StepKind, StepCondition> = {
  block_valve: 'closed_locked_tagged',
  vent: 'vent_open',
  drain: 'drained',
  plug: 'plug_built',
  blind: 'blind_fitted',
  isolator: 'energy_isolated',
};

const position = z.number({ message: 'Enter a position as a number.' }).min(0).max(100_000);

export const planStepSchema = z
  .strictObject({
    pointId: uuidSchema.optional(),
    tempLabel: textField(60, 'Label').optional(),
    tempPosition: position.optional(),
    kind: z.enum(stepKinds, { message: 'Unknown kind of step.' }),
    plugDiameterIn: z.number().positive().max(60).optional(),
  })
  .refine((s) => s.pointId || (s.tempLabel && s.tempPosition !== undefined), { message: 'Pick a point from the register, or give a label and position for a temporary one.', path: ['pointId'] });
export type PlanStepInput = z.infer<typeof planStepSchema>;

export const savePlanInputSchema = z.strictObject({
  version: z.number().int().min(1),
  steps: z.array(planStepSchema).min(1, 'A plan needs at least one step.').max(60, 'A plan can have at most 60 steps.'),
});
export type SavePlanInput = z.infer<typeof savePlanInputSchema>;

export const proposePlanQuerySchema = z
  .strictObject({ fromPosition: z.coerce.number().min(0), toPosition: z.coerce.number().min(0) })
  .refine((q) => q.toPosition >= q.fromPosition, { message: 'The end of the cut must not be before its start.', path: ['toPosition'] });

const isoDateTime = isoDateTimeField();

export const asBuiltPlugSchema = z.strictObject({
  bentoniteLb: z.number({ message: 'Enter the bentonite weighed, in pounds.' }).positive().max(5000),
  waterLb: z.number({ message: 'Enter the water measured, in pounds.' }).positive().max(5000),
  lengthIn: z.number({ message: 'Enter the plug length built, in inches.' }).positive().max(1000),
  builtAt: isoDateTime.optional(),
});
export type AsBuiltPlug = z.infer<typeof asBuiltPlugSchema>;

export const applyStepInputSchema = z.strictObject({
  lockId: uuidSchema.optional(),
  tagId: uuidSchema.optional(),
  appliedAt: isoDateTime.optional(),
  photoAttachmentId: uuidSchema.optional(),
  asBuilt: asBuiltPlugSchema.optional(),
});
export type ApplyStepInput = z.infer<typeof applyStepInputSchema>;

export const verificationMethods = ['position_checked', 'try_out', 'pressure_reading', 'plug_length'] as const;
export const verificationLabels: Record<(typeof verificationMethods)[number], string> = {
  position_checked: 'Position checked',
  try_out: 'Try-out attempted',
  pressure_reading: 'Pressure read at vent/bleed',
  plug_length: 'Plug built to length',
};
export const pressureUnits = ['psig', 'kPa', 'bar', 'in', 'mm'] as const;

export const verifyStepInputSchema = z
  .strictObject({
    method: z.enum(verificationMethods, { message: 'Choose how you verified it.' }),
    reading: z.number().min(-100).max(100_000).optional(),
    unit: z.enum(pressureUnits).optional(),
    notes: textField(1000, 'Notes').optional(),
  })
  .refine((v) => !['pressure_reading', 'plug_length'].includes(v.method) || (v.reading !== undefined && v.unit !== undefined), {
    message: 'Give the reading and its unit.',
    path: ['reading'],
  });
export type VerifyStepInput = z.infer<typeof verifyStepInputSchema>;

export const removeStepInputSchema = z.strictObject({
  note: textField(1000, 'Note').optional(),
  plugOutcome: z.enum(['removed', 'displaced_by_product']).optional(),
  outOfOrderReason: textField(1000, 'Reason').optional(),
});
export type RemoveStepInput = z.infer<typeof removeStepInputSchema>;

export const acknowledgeStepInputSchema = z.strictObject({
  what: z.enum(['remote_inhibited', 'applied', 'removed', 'plug_warnings']),
});
export type AcknowledgeStepInput = z.infer<typeof acknowledgeStepInputSchema>;
