import { z } from 'zod';
import { permitStates, workKinds } from '../permit/states';
import { permitEvents } from '../permit/state-machine';
import { isoDateField, isoDateTimeField, requiredText, textField, uuidSchema } from './common.schema';

const position = z.coerce.number({ message: 'Enter a position as a number.' }).min(0, 'A position cannot be negative.').max(100_000, 'That position is beyond any line.');
const isoDateTime = isoDateTimeField();

const permitFields = {
  kinds: z.array(z.enum(workKinds, { message: 'Unknown kind of work.' })).min(1, 'Choose at least one kind of work.').max(4),
  title: requiredText(160, 'Title'),
  scope: textField(4000, 'Scope').default(''),
  pipelineId: uuidSchema,
  fromPosition: position,
  toPosition: position,
  jobReference: textField(80, 'Job reference').optional(),
  methodStatement: textField(20_000, 'Method statement').default(''),
  hazards: textField(4000, 'Hazards').default(''),
  ppe: z.array(requiredText(80, 'PPE item')).max(30).default([]),
  validFrom: isoDateTime,
  validTo: isoDateTime,
  contractorOrganisationId: uuidSchema,
  contractorLeadUserId: uuidSchema.optional().nullable(),
  fireWatchMinutes: z.coerce.number().int().min(30, 'A fire watch is at least 30 minutes (OSHA 29 CFR 1910.252(a)(2)(iii)(B)); NFPA 51B (2019 edition) requires 60 unless the site chose the OSHA half hour.').max(480).default(60),
  fireWatchPerson: textField(120, 'Fire watch').optional(),
  gasTestWindowMinutes: z.coerce.number().int().min(5).max(240).optional(),
  gasTestIntervalMinutes: z.coerce.number().int().min(5).max(480).optional(),
};

const rangeChecks = <T extends { fromPosition?: number; toPosition?: number; validFrom?: string; validTo?: string }>(v: T, ctx: z.RefinementCtx) => {
  if (v.fromPosition !== undefined && v.toPosition !== undefined && v.toPosition < v.fromPosition)
    ctx.addIssue({ code: 'custom', path: ['toPosition'], message: 'The end of the work range must not be before its start.' });
  if (v.validFrom && v.validTo && new Date(v.validTo) <= new Date(v.validFrom)) ctx.addIssue({ code: 'custom', path: ['validTo'], message: 'The permit must end after it starts.' });
};

export const createPermitInputSchema = z.strictObject(permitFields).superRefine(rangeChecks);
export type CreatePermitInput = z.input<typeof createPermitInputSchema>;
export type CreatePermitData = z.output<typeof createPermitInputSchema>;

// A PATCH changes only the fields sent: with the defaults left in, .partial() would fill them in and blank
// the scope, method, hazards and PPE (and reset the fire watch) of a draft whenever another field is edited.
const patchFields = {
  ...permitFields,
  scope: permitFields.scope.unwrap(),
  methodStatement: permitFields.methodStatement.unwrap(),
  hazards: permitFields.hazards.unwrap(),
  ppe: permitFields.ppe.unwrap(),
  fireWatchMinutes: permitFields.fireWatchMinutes.unwrap(),
};

export const updatePermitInputSchema = z
  .strictObject({ ...patchFields, version: z.number().int().min(1) })
  .partial()
  .required({ version: true })
  .superRefine(rangeChecks);
export type UpdatePermitInput = z.output<typeof updatePermitInputSchema>;

export const transitionInputSchema = z.strictObject({
  event: z.enum(permitEvents, { message: 'Unknown action.' }),
  version: z.number({ message: 'Send the version of the permit you are looking at.' }).int().min(1),
  reason: textField(2000, 'Reason').optional(),
  password: z.string().max(256).optional(),
  signedName: textField(120, 'Typed name').optional(),
  validTo: isoDateTime.optional(),
});
export type TransitionInput = z.infer<typeof transitionInputSchema>;

export const permitsQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  state: z
    .string()
    .optional()
    .transform((s) => (s ? s.split(',').filter(Boolean) : undefined))
    .pipe(z.array(z.enum(permitStates, { message: 'Unknown state.' })).optional()),
  pipelineId: uuidSchema.optional(),
  contractorOrganisationId: uuidSchema.optional(),
  kind: z.enum(workKinds).optional(),
  from: isoDateField().optional(),
  to: isoDateField().optional(),
  q: z.string().trim().max(100).optional(),
  sort: z.enum(['number', 'title', 'state', 'validFrom', 'updatedAt']).default('updatedAt'),
  dir: z.enum(['asc', 'desc']).default('desc'),
});
export type PermitsQuery = z.output<typeof permitsQuerySchema>;

export const checklistUpdateSchema = z.strictObject({
  list: z.enum(['checklist', 'walkdown']),
  key: z.string().min(1).max(80),
  confirmed: z.boolean(),
});
