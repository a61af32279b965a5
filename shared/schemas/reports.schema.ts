import { z } from 'zod';

export const reportPeriods = ['30', '90', '365'] as const;

/** GET /api/reports/overview: the figures over the last 30, 90 (default) or 365 days. */
export const reportsQuerySchema = z.strictObject({
  days: z.enum(reportPeriods, { message: 'Choose 30, 90 or 365 days.' }).default('90'),
});
export type ReportsQuery = z.infer<typeof reportsQuerySchema>;
