import { z } from 'zod';
import { gaugeUnits } from '../calc/pressure';
import { isoDateTimeField, textField, uuidSchema } from './common.schema';

// A gauge on a drained line can read a little below zero; nothing a bleed gauge shows is beyond these.
const reading = z
  .number({ message: 'Enter the pressure the gauge shows, as a number.' })
  .refine(Number.isFinite, 'Enter the pressure the gauge shows, as a number.')
  .min(-100, 'That reading is below any gauge; check it.')
  .max(100_000, 'That reading is beyond any gauge; check it.');
const readAt = isoDateTimeField();

/** POST /api/permits/:id/isolations/provings: the first reading of the section's hold test, at a vent or drain of the plan. */
export const startProvingInputSchema = z.strictObject({
  stepId: uuidSchema,
  reading,
  unit: z.enum(gaugeUnits, { message: 'Choose psig, kPa or bar.' }),
  readAt: readAt.optional(),
  notes: textField(1000, 'Notes').optional(),
});
export type StartProvingInput = z.infer<typeof startProvingInputSchema>;

/** POST /api/permits/:id/isolations/provings/:provingId/end: the reading at the end of the hold, on the same gauge. */
export const endProvingInputSchema = z.strictObject({
  reading,
  readAt: readAt.optional(),
  notes: textField(1000, 'Notes').optional(),
});
export type EndProvingInput = z.infer<typeof endProvingInputSchema>;
