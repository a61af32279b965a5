import { z } from 'zod';
import { inventoryStates } from './assets.schema';

/** The number in a label's address (or typed by hand): a register number, compared in capitals. */
export const scanCodeSchema = z
  .string({ message: 'Give the number on the lock or tag.' })
  .trim()
  .min(1, 'Give the number on the lock or tag.')
  .max(40, 'A lock or tag number has at most 40 characters.')
  .regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, 'A lock or tag number uses letters, digits and . _ / - only.')
  .transform((s) => s.toUpperCase());

/** Labels for the tenant's stock: which register, narrowed as the list page narrows it. */
export const labelSheetQuerySchema = z.strictObject({
  kind: z.enum(['lock', 'tag'], { message: 'Choose locks or tags.' }).default('lock'),
  state: z.enum(inventoryStates, { message: 'Choose in store, on an isolation, lost or retired.' }).optional(),
  q: z.string().trim().max(100).optional(),
});
export type LabelSheetQuery = z.infer<typeof labelSheetQuerySchema>;

/** At most this many labels in one sheet download (20 pages of 21). */
export const LABEL_SHEET_MAX = 420;
