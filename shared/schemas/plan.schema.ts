import { z } from 'zod';
import { isoDateField, isoDateTimeField, uuidSchema } from './common.schema';

/** The longest stretch of time the week-ahead view reads at once. */
export const planMaxDays = 62;
/** How many of the permits one permit meets the week ahead names; the rest are counted (as the permit page's warning). */
export const planOverlapsPerPermit = 10;

/**
 * GET /api/plan: the permits whose validity window falls in [from, to). Without from and to the
 * window is the past 7 site days and the next 14.
 */
export const planQuerySchema = z
  .strictObject({
    from: isoDateTimeField().optional(),
    to: isoDateTimeField().optional(),
    pipelineId: uuidSchema.optional(),
    contractorId: uuidSchema.optional(),
  })
  .superRefine((q, ctx) => {
    if (!q.from || !q.to) return;
    const span = Date.parse(q.to) - Date.parse(q.from);
    if (span <= 0) ctx.addIssue({ code: 'custom', path: ['to'], message: 'The end must be after the start.' });
    else if (span > planMaxDays * 86_400_000) ctx.addIssue({ code: 'custom', path: ['to'], message: `Choose at most ${planMaxDays} days at once.` });
  });
export type PlanQuery = z.infer<typeof planQuerySchema>;

/** The planning page's address: the filters and, for the morning meeting, one site day. */
export const planPageQuerySchema = z.strictObject({
  pipelineId: uuidSchema.optional(),
  contractorId: uuidSchema.optional(),
  day: isoDateField().optional(),
});
export type PlanPageQuery = z.infer<typeof planPageQuerySchema>;
