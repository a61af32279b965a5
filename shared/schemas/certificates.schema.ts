import { z } from 'zod';
import { gaugeUnits } from '../calc/pressure';
import { certificateStates } from '../isolations/certificate-states';
import { pageQuerySchema, textField, uuidSchema } from './common.schema';


/** GET /api/certificates: paged on the server; filter by state, pipeline or long-term isolations only. */
export const certificatesQuerySchema = z.strictObject({
  ...pageQuerySchema.shape,
  state: z.enum(certificateStates, { message: 'Choose live or returned.' }).optional(),
  pipelineId: uuidSchema.optional(),
  longTerm: z.enum(['true', 'false'], { message: 'Use true or false.' }).optional(),
  /** The certificates a permit relies on or relied on (the permit page's "Isolation certificate" line). */
  permitId: uuidSchema.optional(),
});
export type CertificatesQuery = z.infer<typeof certificatesQuerySchema>;

/** POST /api/permits/:id/certificate: a permit in planning relies on a live certificate instead of isolating again. */
export const linkCertificateInputSchema = z.strictObject({
  certificateId: uuidSchema,
});
export type LinkCertificateInput = z.infer<typeof linkCertificateInputSchema>;

const reason = textField(1000, 'Reason').pipe(z.string().min(3, 'Say in words why the isolation stays in place.'));

/** POST /api/certificates/:id/long-term: the authoriser keeps the isolation beyond its permits. */
export const markLongTermInputSchema = z.strictObject({
  reason,
});
export type MarkLongTermInput = z.infer<typeof markLongTermInputSchema>;

/** POST /api/certificates/:id/rechecks: a re-check of a long-term isolation at its interval. */
export const recordRecheckInputSchema = z.strictObject({
  locksAndTagsIntact: z.boolean({ message: 'Say whether every lock and tag is still on and intact.' }),
  valvesStillClosed: z.boolean({ message: 'Say whether every valve is still closed.' }),
  gaugeReading: z
    .number({ message: 'Enter the pressure the gauge shows, as a number.' })
    .refine(Number.isFinite, 'Enter the pressure the gauge shows, as a number.')
    .min(-100, 'That reading is below any gauge; check it.')
    .max(100_000, 'That reading is beyond any gauge; check it.'),
  gaugeUnit: z.enum(gaugeUnits, { message: 'Choose psig, kPa or bar.' }),
  notes: textField(1000, 'Notes').optional(),
});
export type RecordRecheckInput = z.infer<typeof recordRecheckInputSchema>;

/** POST /api/certificates/:id/return: the authoriser returns a certificate no permit relies on and whose isolations are off. */
export const returnCertificateInputSchema = z.strictObject({});
export type ReturnCertificateInput = z.infer<typeof returnCertificateInputSchema>;
