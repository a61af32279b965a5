import { z } from 'zod';
import { PIPE_SCHEDULES } from '../calc/pipe-table';
import { CalcInputError } from '../calc/units';
import { resolveInsideDiameter } from '../assets/inside-diameter';
import { pageQuerySchema, requiredText, textField, uuidSchema } from './common.schema';

export const productKinds = ['refined_products', 'crude_oil', 'natural_gas', 'ngl', 'co2', 'water', 'other'] as const;
export type ProductKind = (typeof productKinds)[number];
export const productLabels: Record<ProductKind, string> = {
  refined_products: 'Refined products',
  crude_oil: 'Crude oil',
  natural_gas: 'Natural gas',
  ngl: 'NGL',
  co2: 'Carbon dioxide',
  water: 'Water',
  other: 'Other',
};

export const locationUnits = ['mi', 'km'] as const;
export type LocationUnit = (typeof locationUnits)[number];
/** Milepost or kilometre post, as written beside a position. */
export const positionPrefix: Record<LocationUnit, string> = { mi: 'MP', km: 'KP' };

export const isolationPointKinds = ['block_valve', 'vent', 'drain', 'plug_position', 'blind_position', 'mechanical_plug_position', 'isolator'] as const;
export type IsolationPointKind = (typeof isolationPointKinds)[number];
export const pointKindLabels: Record<IsolationPointKind, string> = {
  block_valve: 'Block valve',
  vent: 'Vent connection',
  drain: 'Drain connection',
  plug_position: 'Mud plug position',
  blind_position: 'Blind / spade position',
  mechanical_plug_position: 'Stopple / mechanical plug position',
  isolator: 'Energy isolator',
};

export const valveTypes = ['gate', 'ball', 'plug', 'check'] as const;
export type ValveType = (typeof valveTypes)[number];
export const valveTypeLabels: Record<ValveType, string> = { gate: 'Gate', ball: 'Ball', plug: 'Plug', check: 'Check' };

export const normalPositions = ['open', 'closed'] as const;
export type NormalPosition = (typeof normalPositions)[number];

export const inventoryStates = ['in_store', 'applied', 'lost', 'retired'] as const;
export type InventoryState = (typeof inventoryStates)[number];
export const inventoryStateLabels: Record<InventoryState, string> = { in_store: 'In store', applied: 'On an isolation', lost: 'Lost', retired: 'Retired' };

/** Codes people paint on valves and stamp on locks: stored in capitals so "cr-bv-149" and "CR-BV-149" are one code. */
export const codeField = (label: string, max = 40) =>
  requiredText(max, label)
    .pipe(z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, `${label} may use letters, digits and . _ / - only, with no spaces.`))
    .transform((s) => s.toUpperCase());

// numeric(9,3): up to 999,999.999 either side of zero, three decimals (a metre or about five feet).
const POSITION_LIMIT = 999_999.999;
export const positionField = (label: string) =>
  z
    .number({ message: `${label} must be a number.` })
    .refine(Number.isFinite, `${label} must be a number.`)
    .refine((v) => Math.abs(v) <= POSITION_LIMIT, `${label} must be between -999999.999 and 999999.999.`)
    .refine((v) => Math.abs(Math.round(v * 1000) - v * 1000) < 1e-6, `${label} may have at most three decimals.`);

const optionalNumber = (label: string, min: number, max: number) =>
  z
    .number({ message: `${label} must be a number.` })
    .refine((v) => v > min && v <= max, `${label} must be greater than ${min} and at most ${max}.`)
    .nullable()
    .optional();

export const siteInputSchema = z.strictObject({
  name: requiredText(120, 'Site name'),
  position: positionField('Position'),
});
export type SiteInput = z.infer<typeof siteInputSchema>;

export const pipelineBaseSchema = z.strictObject({
  code: codeField('Code'),
  name: requiredText(120, 'Name'),
  product: z.enum(productKinds, { message: 'Choose the product carried.' }),
  nps: z.number({ message: 'Nominal pipe size must be a number.' }).refine((v) => v > 0 && v <= 60, 'Nominal pipe size must be greater than 0 and at most 60.'),
  schedule: z.enum(PIPE_SCHEDULES, { message: 'Choose STD, 40, XS or 80.' }).nullable().optional(),
  wallThicknessIn: optionalNumber('Wall thickness', 0, 5),
  insideDiameterIn: optionalNumber('Inside diameter', 0, 60),
  mopPsig: z.number({ message: 'Maximum operating pressure must be a number.' }).refine((v) => v >= 0 && v <= 99_999, 'Maximum operating pressure must be from 0 to 99999 psig.'),
  startPosition: positionField('Start position'),
  endPosition: positionField('End position'),
  notes: textField(2000, 'Notes').nullable().optional(),
  sites: z.array(siteInputSchema).max(200, 'At most 200 sites per pipeline.').optional(),
});
type PipelineShape = z.infer<typeof pipelineBaseSchema>;

/** Cross-field rules of a whole pipeline record; PATCH applies them to the record after the change. */
export function checkPipeline(p: PipelineShape, ctx: z.RefinementCtx) {
  if (p.endPosition <= p.startPosition) ctx.addIssue({ code: 'custom', path: ['endPosition'], message: 'The end position must be beyond the start position.' });
  try {
    resolveInsideDiameter(p);
  } catch (err) {
    if (!(err instanceof CalcInputError)) throw err;
    ctx.addIssue({ code: 'custom', path: [err.field], message: err.message });
  }
  const seen = new Set<string>();
  p.sites?.forEach((s, i) => {
    if (s.position < p.startPosition || s.position > p.endPosition) {
      ctx.addIssue({ code: 'custom', path: ['sites', i, 'position'], message: `The site must lie on the line, between ${p.startPosition} and ${p.endPosition}.` });
    }
    const key = s.name.toLowerCase();
    if (seen.has(key)) ctx.addIssue({ code: 'custom', path: ['sites', i, 'name'], message: `Two sites are called "${s.name}".` });
    seen.add(key);
  });
}

/**
 * Cross-field checks run even when an unrelated field already failed (a CSV row then lists all of
 * its problems at once), but not when a field they read did, nor when the body is not an object at all.
 */
const unlessFailed = (fields: string[]) => ({
  when: (payload: { value: unknown; issues: ReadonlyArray<{ path?: readonly PropertyKey[] }> }) =>
    typeof payload.value === 'object' && payload.value !== null && !Array.isArray(payload.value) && payload.issues.every((i) => !fields.includes(String(i.path?.[0]))),
});
const pipelineCheckFields = ['nps', 'schedule', 'wallThicknessIn', 'insideDiameterIn', 'startPosition', 'endPosition', 'sites'];
const pointCheckFields = ['kind', 'description', 'valveType', 'normalPosition', 'remotelyOperable'];

export const pipelineInputSchema = pipelineBaseSchema.superRefine(checkPipeline, unlessFailed(pipelineCheckFields));
export type PipelineInput = z.infer<typeof pipelineInputSchema>;
export const pipelinePatchSchema = pipelineBaseSchema.partial();
export type PipelinePatch = z.infer<typeof pipelinePatchSchema>;

export const pointBaseSchema = z.strictObject({
  pipelineId: uuidSchema,
  tagCode: codeField('Tag code'),
  kind: z.enum(isolationPointKinds, { message: 'Choose the kind of point.' }),
  position: positionField('Position'),
  description: textField(300, 'Description').nullable().optional(),
  valveType: z.enum(valveTypes, { message: 'Choose gate, ball, plug or check.' }).nullable().optional(),
  normalPosition: z.enum(normalPositions, { message: 'Choose open or closed.' }).nullable().optional(),
  remotelyOperable: z.boolean({ message: 'Say whether the valve can be operated remotely.' }).nullable().optional(),
});
type PointShape = Omit<z.infer<typeof pointBaseSchema>, 'pipelineId'>;

const valveFields = [
  ['valveType', 'Choose the valve type.'],
  ['normalPosition', 'Choose the normal position of the valve.'],
  ['remotelyOperable', 'Say whether the control room can operate this valve remotely.'],
] as const;

export function checkPoint(p: PointShape, ctx: z.RefinementCtx) {
  for (const [field, missing] of valveFields) {
    const given = p[field] !== null && p[field] !== undefined;
    if (p.kind === 'block_valve' && !given) ctx.addIssue({ code: 'custom', path: [field], message: missing });
    if (p.kind !== 'block_valve' && given) ctx.addIssue({ code: 'custom', path: [field], message: `Only block valves have this; leave it empty for a ${pointKindLabels[p.kind].toLowerCase()}.` });
  }
  if (p.kind === 'isolator' && !p.description) ctx.addIssue({ code: 'custom', path: ['description'], message: 'Describe what this isolator isolates (for example the breaker and the motor it feeds).' });
}

export const pointInputSchema = pointBaseSchema.superRefine(checkPoint, unlessFailed(pointCheckFields));
export type PointInput = z.infer<typeof pointInputSchema>;
export const pointPatchSchema = pointBaseSchema.omit({ pipelineId: true }).partial();
export type PointPatch = z.infer<typeof pointPatchSchema>;
/** A point without its pipeline, as the import reads it (the pipeline comes by code). */
export const pointRecordSchema = pointBaseSchema.omit({ pipelineId: true }).superRefine(checkPoint, unlessFailed(pointCheckFields));

export const manualInventoryStates = ['in_store', 'lost', 'retired'] as const;
const manualState = z.enum(inventoryStates, { message: 'Choose in store, lost or retired.' }).refine((s) => s !== 'applied', 'Only the isolation work puts a lock or tag on an isolation.');

export const inventoryInputSchema = z.strictObject({
  number: codeField('Number', 20),
  state: manualState.optional(),
  holderUserId: uuidSchema.nullable().optional(),
  notes: textField(500, 'Notes').nullable().optional(),
});
export type InventoryInput = z.infer<typeof inventoryInputSchema>;
export const inventoryPatchSchema = inventoryInputSchema.partial();
export type InventoryPatch = z.infer<typeof inventoryPatchSchema>;

const search = z.string().trim().max(100).optional();
export const pipelinesQuerySchema = pageQuerySchema.extend({ q: search, product: z.enum(productKinds).optional() });
export type PipelinesQuery = z.infer<typeof pipelinesQuerySchema>;
export const pointsQuerySchema = pageQuerySchema.extend({ q: search, pipelineId: uuidSchema.optional(), kind: z.enum(isolationPointKinds).optional() });
export type PointsQuery = z.infer<typeof pointsQuerySchema>;
export const inventoryQuerySchema = pageQuerySchema.extend({ q: search, state: z.enum(inventoryStates).optional(), holderUserId: uuidSchema.optional() });
export type InventoryQuery = z.infer<typeof inventoryQuerySchema>;
export const importQuerySchema = z.strictObject({ dryRun: z.enum(['true', 'false', '1', '0']).optional() });
