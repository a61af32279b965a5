import { z } from 'zod';
import { uuidSchema } from './common.schema';

/** How many permits one stream may follow: a long "My work" list fits, a scan of the register does not. */
export const maxWatchedPermits = 100;

/** An audit sequence number as the stream sends it in `id:` and takes back in Last-Event-ID or `after`. */
export const liveSeqSchema = z
  .string({ message: 'Must be a number.' })
  .regex(/^\d{1,15}$/, 'Must be a whole number.')
  .transform(Number);

/** GET /api/stream?permitId=…&permitId=…[&after=seq] */
export const liveStreamQuerySchema = z.strictObject({
  permitId: z
    .union([uuidSchema.transform((id) => [id]), z.array(uuidSchema).min(1).max(maxWatchedPermits, `Follow at most ${maxWatchedPermits} permits at once.`)], {
      message: 'Name at least one permit to follow.',
    })
    .transform((ids) => [...new Set(ids)]),
  after: liveSeqSchema.optional(),
});
export type LiveStreamQuery = z.infer<typeof liveStreamQuerySchema>;
