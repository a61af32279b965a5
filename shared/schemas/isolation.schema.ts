import { z } from 'zod';
import { gaugeUnits } from '../calc/pressure';
import { AS_BUILT_MAX_LB, AS_BUILT_MAX_LENGTH_IN } from '../calc/mud-plug';
import { MAX_PIPE_DIAMETER_IN, MIN_PIPE_DIAMETER_IN } from '../calc/pipe-dimensions';
import { KG_PER_LB } from '../calc/units';
import { boardPermitStates } from '../permit/states';
import { stepKinds, type StepKind } from '../isolations/step-kinds';
import { isoDateTimeField, requiredText, textField, uuidSchema } from './common.schema';

export { stepKinds, stepKindLabels, type StepKind } from '../isolations/step-kinds';
export const stepConditions = ['closed_locked_tagged', 'drained', 'vent_open', 'plug_built', 'blind_fitted', 'energy_isolated', 'line_stop_set'] as const;
export type StepCondition = (typeof stepConditions)[number];

export const conditionLabels: Record<StepCondition, string> = {
  closed_locked_tagged: 'Closed, locked and tagged',
  drained: 'Section drained',
  vent_open: 'Vent installed and open',
  plug_built: 'Plug built',
  blind_fitted: 'Blind fitted',
  energy_isolated: 'Energy isolated',
  line_stop_set: 'Line stop set and holding',
};

/** The condition each kind of step must reach. */
export const conditionForKind: Record<StepKind, StepCondition> = {
  block_valve: 'closed_locked_tagged',
  vent: 'vent_open',
  drain: 'drained',
  plug: 'plug_built',
  blind: 'blind_fitted',
  isolator: 'energy_isolated',
  line_stop: 'line_stop_set',
};

const position = z.number({ message: 'Enter a position as a number.' }).min(0).max(100_000);

export const planStepSchema = z
  .strictObject({
    pointId: uuidSchema.optional(),
    tempLabel: textField(60, 'Label').optional(),
    tempPosition: position.optional(),
    kind: z.enum(stepKinds, { message: 'Unknown kind of step.' }),
    // The same bounds as every calculation, so a planned plug can always be sized and its as-built checked.
    plugDiameterIn: z
      .number({ message: 'Give the pipe diameter the plug fills, in inches.' })
      .min(MIN_PIPE_DIAMETER_IN, `The plug diameter must be at least ${MIN_PIPE_DIAMETER_IN} in.`)
      .max(MAX_PIPE_DIAMETER_IN, `The plug diameter must be at most ${MAX_PIPE_DIAMETER_IN} in; check it is in inches.`)
      .optional(),
  })
  .refine((s) => s.pointId || (s.tempLabel && s.tempPosition !== undefined), { message: 'Pick a point from the register, or give a label and position for a temporary one.', path: ['pointId'] });
export type PlanStepInput = z.infer<typeof planStepSchema>;

const deadEndReason = (side: string) =>
  textField(300, 'Reason').pipe(z.string().min(3, `Say why no product can reach the work from ${side} (at least 3 characters).`));

/** A side of the work with no product source (the end of a line, a branch cut and capped), declared with the reason. */
export const deadEndsSchema = z.strictObject({
  upstream: deadEndReason('upstream').optional(),
  downstream: deadEndReason('downstream').optional(),
});
export type DeadEndsInput = z.infer<typeof deadEndsSchema>;

export const savePlanInputSchema = z.strictObject({
  version: z.number().int().min(1),
  steps: z.array(planStepSchema).min(1, 'A plan needs at least one step.').max(60, 'A plan can have at most 60 steps.'),
  deadEnds: deadEndsSchema.optional(),
});
export type SavePlanInput = z.infer<typeof savePlanInputSchema>;

export const proposePlanQuerySchema = z
  .strictObject({ fromPosition: z.coerce.number().min(0), toPosition: z.coerce.number().min(0) })
  .refine((q) => q.toPosition >= q.fromPosition, { message: 'The end of the cut must not be before its start.', path: ['toPosition'] });

const isoDateTime = isoDateTimeField();

// The cap follows the largest pipe the calculator accepts (AS_BUILT_MAX_LB), so any plug it sizes can be recorded.
const asBuiltWeight = (required: string, what: string) =>
  z
    .number({ message: required })
    .positive(`The ${what} must be more than 0.`)
    .max(
      AS_BUILT_MAX_LB,
      `The ${what} must be at most ${AS_BUILT_MAX_LB.toLocaleString('en-US')} lb (${Math.round(AS_BUILT_MAX_LB * KG_PER_LB).toLocaleString('en-US')} kg), more than any plug needs; check the figure and the unit.`,
    );

export const asBuiltPlugSchema = z.strictObject({
  bentoniteLb: asBuiltWeight('Enter the bentonite weighed.', 'bentonite'),
  waterLb: asBuiltWeight('Enter the water used.', 'water'),
  lengthIn: z
    .number({ message: 'Enter the plug length built, in inches.' })
    .positive('The plug length must be more than 0.')
    .max(AS_BUILT_MAX_LENGTH_IN, `The plug length must be at most ${AS_BUILT_MAX_LENGTH_IN} in; check the figure and the unit.`),
  builtAt: isoDateTime.optional(),
});
export type AsBuiltPlug = z.infer<typeof asBuiltPlugSchema>;

/** A line stop (stopple) or mechanical plug as set: its own record, not a mud plug's weights. */
export const asBuiltLineStopSchema = z
  .strictObject({
    device: requiredText(120, 'Device'),
    sizeIn: z.number({ message: 'Enter the nominal size of the fitting or plug, in inches.' }).positive('The size must be more than 0 in.').max(60, 'The size must be at most 60 in.'),
    setPressure: z.number({ message: 'Enter the set (seal) pressure as a number.' }).min(0, 'The set pressure cannot be below zero.').max(100_000).optional(),
    setPressureUnit: z.enum(gaugeUnits, { message: 'Choose psig, kPa or bar.' }).optional(),
    setPosition: textField(120, 'Set position').optional(),
    setAt: isoDateTime.optional(),
  })
  .superRefine((v, ctx) => {
    if (v.setPressure === undefined && !v.setPosition)
      ctx.addIssue({ code: 'custom', path: ['setPressure'], message: 'Give the set pressure, or where the plugging head or plug is set.' });
    if (v.setPressure !== undefined && !v.setPressureUnit) ctx.addIssue({ code: 'custom', path: ['setPressureUnit'], message: 'Give the unit of the set pressure.' });
  });
export type AsBuiltLineStop = z.infer<typeof asBuiltLineStopSchema>;

export const applyStepInputSchema = z.strictObject({
  lockId: uuidSchema.optional(),
  tagId: uuidSchema.optional(),
  appliedAt: isoDateTime.optional(),
  photoAttachmentId: uuidSchema.optional(),
  asBuilt: asBuiltPlugSchema.optional(),
  lineStop: asBuiltLineStopSchema.optional(),
  /** Needed when an earlier step of the plan is not on yet. */
  outOfOrderReason: textField(1000, 'Reason').optional(),
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
    /** When it was verified on site, for a verification written down or sent later. */
    verifiedAt: isoDateTime.optional(),
  })
  .refine((v) => !['pressure_reading', 'plug_length'].includes(v.method) || (v.reading !== undefined && v.unit !== undefined), {
    message: 'Give the reading and its unit.',
    path: ['reading'],
  });
export type VerifyStepInput = z.infer<typeof verifyStepInputSchema>;

export const removeStepInputSchema = z.strictObject({
  note: textField(1000, 'Note').optional(),
  plugOutcome: z.enum(['removed', 'displaced_by_product'], { message: 'Say whether the plug was removed or left to be displaced by product.' }).optional(),
  outOfOrderReason: textField(1000, 'Reason').optional(),
  /** The remover's signature, needed when they take off someone else's lock under a recorded exception. */
  password: z.string().max(256).optional(),
  signedName: textField(120, 'Typed name').optional(),
});
export type RemoveStepInput = z.infer<typeof removeStepInputSchema>;

export const contactAttemptSchema = z.strictObject({
  how: requiredText(300, 'How you tried to reach them'),
  at: isoDateTimeField('Give the date and time you tried.'),
});
export type ContactAttempt = z.infer<typeof contactAttemptSchema>;

/**
 * What an authoriser records before someone else may take off a lock or tag whose owner is not at the
 * site (OSHA 29 CFR 1910.147(e)(3)(i)–(iii)), signed with their password and typed name.
 */
export const removalExceptionInputSchema = z.strictObject({
  absenceCheck: requiredText(1000, 'How you checked they are not on site'),
  contactAttempts: z.array(contactAttemptSchema).min(1, 'Record at least one attempt to reach them.').max(10, 'Record at most 10 attempts.'),
  informPlan: requiredText(1000, 'How they will be told before they return'),
  password: z.string({ message: 'Re-enter your password to sign.' }).min(1, 'Re-enter your password to sign.').max(256),
  signedName: requiredText(120, 'Typed name'),
});
export type RemovalExceptionInput = z.infer<typeof removalExceptionInputSchema>;

export const acknowledgeStepInputSchema = z.strictObject({
  what: z.enum(['remote_inhibited', 'applied', 'removed', 'plug_warnings']),
});
export type AcknowledgeStepInput = z.infer<typeof acknowledgeStepInputSchema>;

/** GET /api/board, and the board page's address. */
export const boardQuerySchema = z.strictObject({
  pipelineId: uuidSchema.optional(),
  permitState: z.enum(boardPermitStates).optional(),
  /** Only isolations the control room has still to acknowledge: as applied, or a remote valve's remote operation as inhibited. */
  unacknowledged: z.enum(['true', 'false'], { message: 'Use true or false.' }).optional(),
});
export type BoardQuery = z.infer<typeof boardQuerySchema>;
