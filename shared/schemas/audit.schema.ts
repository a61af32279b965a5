import { z } from 'zod';
import { isoDateTimeField, uuidSchema } from './common.schema';

const kindField = z
  .string({ message: 'The kind of event must be text.' })
  .trim()
  .max(60, 'The kind of event must be at most 60 characters.')
  .regex(/^[a-z0-9_]*$/, 'Choose a kind of event from the list.');

/** The filters of the tenant-wide audit log; the page and the export read the same ones. */
const auditFilterFields = {
  actor: z.union([uuidSchema, z.literal('')]).optional(),
  kind: kindField.optional(),
  permitId: z.union([uuidSchema, z.literal('')]).optional(),
  /** An isolation point, a lock or any other record the event is about. */
  entityId: z.union([uuidSchema, z.literal('')]).optional(),
  from: z.union([isoDateTimeField('Use a start time like 2026-12-02T07:00:00Z.'), z.literal('')]).optional(),
  to: z.union([isoDateTimeField('Use an end time like 2026-12-02T19:00:00Z.'), z.literal('')]).optional(),
};

const startBeforeEnd = (v: { from?: string; to?: string }) => !v.from || !v.to || Date.parse(v.from) <= Date.parse(v.to);
const startBeforeEndIssue = { message: 'The start of the time range must come before its end.', path: ['to'] };

export const auditEventsQuerySchema = z
  .strictObject({
    page: z.coerce.number().int().min(1).max(100_000).default(1),
    pageSize: z.coerce.number().int().min(1).max(200).default(25),
    ...auditFilterFields,
  })
  .refine(startBeforeEnd, startBeforeEndIssue);
export type AuditEventsQuery = z.infer<typeof auditEventsQuerySchema>;

export const auditExportFormats = ['jsonl', 'csv'] as const;
export const auditExportQuerySchema = z
  .strictObject({
    format: z.enum(auditExportFormats, { message: 'Choose CSV or JSON Lines.' }).default('jsonl'),
    ...auditFilterFields,
  })
  .refine(startBeforeEnd, startBeforeEndIssue);
export type AuditExportQuery = z.infer<typeof auditExportQuerySchema>;

export type AuditFilters = Omit<AuditEventsQuery, 'page' | 'pageSize'>;

/** Starting a chain check or asking for a checkpoint takes nothing; anything sent is refused, so a stray body never starts work. */
export const auditActionInputSchema = z.strictObject({});
