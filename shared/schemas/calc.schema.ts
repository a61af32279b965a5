import { z } from 'zod';
import {
  DEFAULT_WATER_FRACTION,
  MAX_LINE_LENGTH_FT,
  MAX_PIPE_DIAMETER_IN,
  MIN_PIPE_DIAMETER_IN,
  MM_PER_IN,
  M_PER_FT,
  B36_SCHEDULES,
  WATER_FRACTION_MAX,
  WATER_FRACTION_MIN,
} from '../calc';

// Query strings and form inputs arrive as text. Only plain decimals count as numbers:
// z.coerce.number alone would take "0x10" as 16 and `true` as 1, which no one means as a diameter.
const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$/;

function toNumber(value: unknown): unknown {
  if (typeof value === 'number') return value;
  if (typeof value !== 'string') return value === undefined || value === null ? undefined : Number.NaN;
  const text = value.trim();
  if (text === '') return undefined;
  return DECIMAL.test(text) ? Number(text) : Number.NaN;
}

interface NumberRule {
  /** Who the message talks about: the query parameter ("diameterIn") or the form label ("The diameter"). */
  name: string;
  unit: string;
  /** Smallest accepted value; zero and below are always refused with "must be a number greater than 0". */
  min?: number;
  max: number;
  /** Why the range exists, said after it. */
  why?: string;
}

const fmt = (n: number) => Number(n.toPrecision(6)).toLocaleString('en-US', { maximumFractionDigits: 6 });

/** A number from text, one message per field, saying what is wrong and why. */
export function numberField(rule: NumberRule) {
  const because = rule.why ? ` ${rule.why}` : '';
  const greater = `${rule.name} must be a number greater than 0.`;
  return z.preprocess(
    toNumber,
    z
      .number({ error: (issue) => (issue.input === undefined ? `${rule.name} is required: enter a number greater than 0.` : greater) })
      .superRefine((n, ctx) => {
        if (n <= 0) ctx.addIssue({ code: 'custom', message: greater });
        else if (rule.min !== undefined && n < rule.min) ctx.addIssue({ code: 'custom', message: `${rule.name} must be at least ${fmt(rule.min)} ${rule.unit}.${because}` });
        else if (n > rule.max) ctx.addIssue({ code: 'custom', message: `${rule.name} must be at most ${fmt(rule.max)} ${rule.unit}.${because}` });
      }),
  );
}

const diameterWhy = 'Check the figure is the pipe diameter in inches.';
const waterWhy =
  'The paste is mixed 50/50 to 60/40 water to bentonite by weight, so the water share is 0.50 to 0.60 (common practice, no published source).';

export const diameterInRule = { unit: 'in', min: MIN_PIPE_DIAMETER_IN, max: MAX_PIPE_DIAMETER_IN, why: diameterWhy };
export const diameterMmRule = {
  unit: 'mm',
  min: MIN_PIPE_DIAMETER_IN * MM_PER_IN,
  max: MAX_PIPE_DIAMETER_IN * MM_PER_IN,
  why: 'Check the figure is the pipe diameter in millimetres.',
};

/** Water share by weight, with the refusal naming the mix rule. */
export function waterFractionField(name: string) {
  const range = `${name} must be from 0.50 to 0.60. ${waterWhy}`;
  return z.preprocess(
    toNumber,
    z
      .number({ error: (issue) => (issue.input === undefined ? `${name} is required.` : `${name} must be a number from 0.50 to 0.60.`) })
      .refine((w) => w >= WATER_FRACTION_MIN && w <= WATER_FRACTION_MAX, range),
  );
}

export const mudPlugQuerySchema = z.strictObject({
  diameterIn: numberField({ name: 'diameterIn', ...diameterInRule }),
  // Absent or empty means the 50/50 default mix.
  waterFraction: z.preprocess(toNumber, waterFractionField('waterFraction').optional()).transform((w) => w ?? DEFAULT_WATER_FRACTION),
});
export type MudPlugQuery = z.infer<typeof mudPlugQuerySchema>;

export const scheduleField = (name: string) =>
  z.preprocess(
    (v) => (typeof v === 'string' ? v.trim().toUpperCase().replace(/^SCH\s*/, '') : typeof v === 'number' ? String(v) : v),
    z.enum(B36_SCHEDULES, { error: () => `${name} must be one of ${B36_SCHEDULES.join(', ')}.` }),
  );

export const pipeQuerySchema = z.strictObject({
  nps: numberField({ name: 'nps', unit: 'in', min: 0.125, max: 60, why: 'NPS is the nominal pipe size, such as 10 or 1.25.' }),
  schedule: scheduleField('schedule'),
});
export type PipeQuery = z.infer<typeof pipeQuerySchema>;

export const lineFillQuerySchema = z.strictObject({
  idIn: numberField({ name: 'idIn', ...diameterInRule, why: 'Check the figure is the bore in inches.' }),
  lengthFt: numberField({
    name: 'lengthFt',
    unit: 'ft',
    max: MAX_LINE_LENGTH_FT,
    why: 'No isolated section is longer than about 1,000 miles; check for an extra digit.',
  }),
});
export type LineFillQuery = z.infer<typeof lineFillQuerySchema>;

// Readings: null or '' means "not measured", which assessAtmosphere reports and never counts as a pass.
function reading(name: string, unit: string, max: number) {
  return z.preprocess(
    (v) => (v === null ? null : toNumber(v)),
    z
      .number({ error: () => `The ${name} reading must be a number, or left empty when not measured.` })
      .min(0, `The ${name} reading cannot be negative.`)
      .max(max, `The ${name} reading must be at most ${max.toLocaleString('en-US')} ${unit}; check the unit and the instrument.`)
      .nullable()
      .optional(),
  );
}

export const atmosphereReadingsSchema = z.strictObject(
  {
    o2Pct: reading('oxygen', '%vol', 100),
    lelPct: reading('flammable gas', '%LEL', 100),
    h2sPpm: reading('H₂S', 'ppm', 1_000_000),
    coPpm: reading('CO', 'ppm', 1_000_000),
  },
  { error: () => 'readings must be an object with o2Pct, lelPct, h2sPpm and coPpm; leave out a gas that was not measured.' },
);

export const atmosphereRequestSchema = z.strictObject({
  readings: atmosphereReadingsSchema,
  hotWork: z.boolean({ error: () => 'hotWork must be true or false.' }).default(false),
});
export type AtmosphereRequest = z.infer<typeof atmosphereRequestSchema>;

/**
 * What a tenant may keep in tenants.settings about gas tests. Limits only tighten the published
 * ones (tightenLimits refuses anything looser); hotWorkLelPct sets the hot-work flammable limit.
 */
const maxOnly = z.object({ max: z.number().finite().optional() }).optional();
export const tenantAtmosphereSettingsSchema = z.object({
  atmosphereLimits: z
    .object({
      o2: z.object({ min: z.number().finite().optional(), max: z.number().finite().optional() }).optional(),
      lel: maxOnly,
      hotWorkLel: maxOnly,
      h2s: maxOnly,
      co: maxOnly,
    })
    .optional(),
  hotWorkLelPct: z.number().finite().optional(),
});
export type TenantAtmosphereSettings = z.infer<typeof tenantAtmosphereSettingsSchema>;

// ---- Calculator page forms: the same number rules, worded for the person at the form ----

export const WATER_FRACTION_CHOICES = ['0.50', '0.55', '0.60'] as const;

export const mudPlugFormSchema = z
  .strictObject({
    diameterMode: z.enum(['register', 'nominal', 'schedule', 'measured']),
    pipelineId: z.string(),
    nominalIn: z.string(),
    nps: z.string(),
    schedule: z.enum(B36_SCHEDULES),
    measured: z.string(),
    measuredUnit: z.enum(['in', 'mm']),
    ratio: z.enum([...WATER_FRACTION_CHOICES, 'custom']),
    customWaterFraction: z.string(),
  })
  .superRefine((v, ctx) => {
    const check = (path: string, schema: z.ZodType, value: unknown) => {
      const result = schema.safeParse(value);
      if (!result.success) ctx.addIssue({ code: 'custom', path: [path], message: result.error.issues[0]?.message ?? 'Not valid.' });
    };
    if (v.diameterMode === 'register' && v.pipelineId === '') ctx.addIssue({ code: 'custom', path: ['pipelineId'], message: 'Choose a pipeline from the register.' });
    if (v.diameterMode === 'nominal') check('nominalIn', numberField({ name: 'The diameter', ...diameterInRule }), v.nominalIn);
    if (v.diameterMode === 'schedule' && v.nps.trim() === '') ctx.addIssue({ code: 'custom', path: ['nps'], message: 'Choose a pipe size.' });
    if (v.diameterMode === 'measured') {
      const rule = v.measuredUnit === 'mm' ? diameterMmRule : diameterInRule;
      check('measured', numberField({ name: 'The inside diameter', ...rule }), v.measured);
    }
    if (v.ratio === 'custom') check('customWaterFraction', waterFractionField('The water share'), v.customWaterFraction);
  });
export type MudPlugForm = z.infer<typeof mudPlugFormSchema>;

export const lineFillFormSchema = z
  .strictObject({
    idValue: z.string(),
    idUnit: z.enum(['in', 'mm']),
    length: z.string(),
    lengthUnit: z.enum(['ft', 'm']),
  })
  .superRefine((v, ctx) => {
    const check = (path: string, schema: z.ZodType, value: unknown) => {
      const result = schema.safeParse(value);
      if (!result.success) ctx.addIssue({ code: 'custom', path: [path], message: result.error.issues[0]?.message ?? 'Not valid.' });
    };
    const idRule = v.idUnit === 'mm' ? diameterMmRule : { ...diameterInRule, why: 'Check the figure is the bore in inches.' };
    check('idValue', numberField({ name: 'The inside diameter', ...idRule }), v.idValue);
    const maxLength = v.lengthUnit === 'm' ? MAX_LINE_LENGTH_FT * M_PER_FT : MAX_LINE_LENGTH_FT;
    check(
      'length',
      numberField({ name: 'The length', unit: v.lengthUnit, max: maxLength, why: 'Check for an extra digit.' }),
      v.length,
    );
  });
export type LineFillForm = z.infer<typeof lineFillFormSchema>;
