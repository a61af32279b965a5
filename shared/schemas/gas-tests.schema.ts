import { z } from 'zod';
import { readingColumns } from '../gas-tests/csv-readings';
import { gasTestPlaces } from '../gas-tests/places';
import { isoDateField, isoDateTimeField, requiredText, textField, uuidSchema } from './common.schema';

const isoDateTime = isoDateTimeField();
const isoDate = isoDateField();

export { gasTestPlaces, gasTestPlaceLabels, type GasTestPlace } from '../gas-tests/places';

export const gasTestPurposes = ['before_cleaning', 'before_work', 'repeat'] as const;
export type GasTestPurpose = (typeof gasTestPurposes)[number];
export const gasTestPurposeLabels: Record<GasTestPurpose, string> = {
  before_cleaning: 'Before cleaning the pipe interior',
  before_work: 'Before work (or hot work) starts',
  repeat: 'Repeat test during work',
};

// Form fields arrive as text and JSON as numbers. An empty field is "missing", never 0: a blank
// flammable reading read as 0 %LEL would pass a test nobody took.
const DECIMAL = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const toNumber = (v: unknown) => (typeof v === 'string' ? (v.trim() === '' ? undefined : DECIMAL.test(v.trim()) ? Number(v.trim()) : Number.NaN) : v);
const reading = (name: string, unit: string, max: number) =>
  z.preprocess(
    toNumber,
    z
      .number({ error: (i) => (i.input === undefined ? `Enter the ${name} reading.` : `The ${name} reading must be a number.`) })
      .min(0, `The ${name} reading cannot be negative.`)
      .max(max, `The ${name} reading must be at most ${max.toLocaleString('en-US')} ${unit}; check the unit and the instrument.`),
  );

export const gasReadingsSchema = z.strictObject({
  o2Pct: reading('oxygen', '%vol', 100),
  lelPct: reading('flammable gas', '%LEL', 100),
  h2sPpm: reading('H₂S', 'ppm', 1_000_000),
  coPpm: reading('CO', 'ppm', 1_000_000),
  /** Further gases the monitor reads; stored and shown, not judged. */
  others: z.array(z.strictObject({ name: requiredText(40, 'Gas'), value: reading('other gas', 'units', 1_000_000), unit: requiredText(12, 'Unit') })).max(6).optional(),
});

export const gasTestInputSchema = z
  .strictObject({
    instrumentId: uuidSchema,
    place: z.enum(gasTestPlaces, { message: 'Choose where the test was taken.' }),
    placeNote: textField(200, 'Where').optional(),
    purpose: z.enum(gasTestPurposes).optional(),
    testedAt: isoDateTime,
    readings: gasReadingsSchema,
    notes: textField(1000, 'Notes').optional(),
  })
  .superRefine((v, ctx) => {
    if (v.place === 'other' && !v.placeNote?.trim()) ctx.addIssue({ code: 'custom', path: ['placeNote'], message: 'Say where the test was taken.' });
  });
export type GasTestInput = z.input<typeof gasTestInputSchema>;
export type GasTestData = z.output<typeof gasTestInputSchema>;

export const gasTestsQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(25),
  dir: z.enum(['asc', 'desc']).default('desc'),
});

const columnName = z.string().trim().min(1).max(120);
export const columnMappingSchema = z.strictObject(Object.fromEntries(readingColumns.map((c) => [c, columnName.optional()])) as Record<(typeof readingColumns)[number], z.ZodOptional<typeof columnName>>);

const flag = z.preprocess((v) => (v === 'true' || v === '1' ? true : v === 'false' || v === '0' ? false : v), z.boolean());

/** POST /api/permits/:id/gas-tests/import: JSON { csv, … }, or a text/csv body with the rest in the query string. */
export const gasImportInputSchema = z.strictObject({
  csv: z.string({ message: 'Send the CSV text.' }).min(1, 'The file is empty.').max(1_000_000, 'The file is larger than 1 MB; split it.'),
  instrumentId: uuidSchema,
  place: z.enum(gasTestPlaces, { message: 'Choose where the monitor was.' }),
  placeNote: textField(200, 'Where').optional(),
  mapping: columnMappingSchema.optional(),
  dryRun: flag.default(false),
});
export type GasImportInput = z.input<typeof gasImportInputSchema>;

/** The query string that goes with a text/csv body. */
export const gasImportQuerySchema = z.strictObject({
  instrumentId: uuidSchema,
  place: z.enum(gasTestPlaces, { message: 'Choose where the monitor was.' }),
  placeNote: z.string().max(200).optional(),
  dryRun: z.string().optional(),
  ...Object.fromEntries(readingColumns.map((c) => [c, z.string().max(120).optional()])),
});

const limitValue = z.number({ message: 'Enter a number.' }).min(0).max(1_000_000);
export const permitGasLimitsSchema = z.strictObject({
  o2: z.strictObject({ min: limitValue.optional(), max: limitValue.optional() }).optional(),
  lel: z.strictObject({ max: limitValue.optional() }).optional(),
  hotWorkLel: z.strictObject({ max: limitValue.optional() }).optional(),
  h2s: z.strictObject({ max: limitValue.optional() }).optional(),
  co: z.strictObject({ max: limitValue.optional() }).optional(),
}).refine((v) => Object.values(v).some((g) => g && Object.keys(g).length > 0), { message: 'Give at least one limit to tighten.' });
export type PermitGasLimitsInput = z.infer<typeof permitGasLimitsSchema>;

export const instrumentInputSchema = z
  .strictObject({
    model: requiredText(80, 'Model'),
    serial: requiredText(60, 'Serial number'),
    lastBumpTestAt: isoDateTime.nullable().optional(),
    lastCalibratedOn: isoDate.nullable().optional(),
    calibrationDueOn: isoDate,
  })
  .superRefine((v, ctx) => {
    if (v.lastCalibratedOn && v.calibrationDueOn < v.lastCalibratedOn) ctx.addIssue({ code: 'custom', path: ['calibrationDueOn'], message: 'The calibration due date must not be before the last calibration.' });
  });
export type InstrumentInput = z.infer<typeof instrumentInputSchema>;

export const instrumentPatchSchema = z
  .strictObject({
    model: requiredText(80, 'Model').optional(),
    serial: requiredText(60, 'Serial number').optional(),
    lastBumpTestAt: isoDateTime.nullable().optional(),
    lastCalibratedOn: isoDate.nullable().optional(),
    calibrationDueOn: isoDate.optional(),
    retired: z.boolean().optional(),
  })
  .refine((v) => Object.keys(v).length > 0, { message: 'Send at least one field to change.' });
export type InstrumentPatch = z.infer<typeof instrumentPatchSchema>;

export const instrumentsQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
  includeRetired: z.enum(['true', 'false']).optional(),
});
