import { z } from 'zod';
import { isTimeZone } from '../time/zone';
import { textField } from './common.schema';

// What a tenant admin may change on the Settings page (PATCH /api/tenant/settings). Each field says
// its limits in words; the stored document (tenant-settings.schema.ts) is read more loosely because
// several features keep their keys in it.

const wholeNumber = (min: number, max: number, unit: string) => {
  const message = `Enter a whole number of ${unit} from ${min} to ${max}.`;
  return z.number({ message }).int(message).min(min, message).max(max, message);
};

export const NFPA_FIRE_WATCH_MESSAGE = 'NFPA 51B asks for a fire watch of at least 60 minutes. Enter 60 or more, or choose the OSHA half hour.';
export const HOT_WORK_REASON_MESSAGE = 'Say why the hot-work limit is above 0 %LEL (for example the operator standard it comes from).';

const emailMessage = 'Enter an e-mail address such as records@example.com, or leave it empty for none.';
const isEmail = (s: string) => z.email().safeParse(s).success;

export const tenantSettingsInputSchema = z.strictObject({
  timeZone: z
    .string({ message: 'Choose the site’s time zone by its full name, such as America/Chicago.' })
    .trim()
    .max(64, 'Choose the site’s time zone by its full name, such as America/Chicago.')
    .refine((s) => /^[A-Za-z][A-Za-z0-9_+-]*(\/[A-Za-z0-9_+-]+)*$/.test(s) && isTimeZone(s), 'This is not a time zone we know. Use its full name, such as America/Chicago or Europe/London.')
    .optional(),
  // Empty (or null) means none: checkpoints are then only stored, never mailed.
  recordsEmail: z
    .string({ message: emailMessage })
    .trim()
    .max(254, 'An e-mail address is at most 254 characters.')
    .refine((s) => s === '' || isEmail(s), emailMessage)
    .nullable()
    .optional(),
  auditCheckpointHours: wholeNumber(1, 168, 'hours').optional(),
  isolationRecheckHours: wholeNumber(1, 168, 'hours').optional(),
  maxPermitHours: wholeNumber(1, 24 * 31, 'hours').optional(),
  gasTestIntervalMinutes: wholeNumber(5, 480, 'minutes').optional(),
  gasTestOverdueGraceMinutes: wholeNumber(0, 60, 'minutes').optional(),
  requireDailyBumpTest: z.boolean({ message: 'Choose yes or no.' }).optional(),
  fireWatchBasis: z.enum(['nfpa_51b_2019', 'osha_half_hour'], { message: 'Choose NFPA 51B (at least 60 minutes) or the OSHA half hour.' }).optional(),
  fireWatchMinutes: wholeNumber(30, 480, 'minutes').optional(),
  hotWorkLelPct: z
    .number({ message: 'Enter a number from 0 to 10 (%LEL).' })
    .min(0, 'Enter a number from 0 to 10 (%LEL).')
    .max(10, 'Enter a number from 0 to 10 (%LEL); above 10 %LEL the air is hazardous (OSHA 29 CFR 1910.146).')
    .optional(),
  hotWorkLelReason: textField(500, 'The reason for the hot-work limit').nullable().optional(),
  // Why a change that weakens a safety margin is made; kept in the audit trail with the change.
  reason: textField(1000, 'Reason').optional(),
}).superRefine((v, ctx) => {
  // Rules between two fields sent together; the service checks them again on the settings as they would be stored.
  if (v.fireWatchBasis === 'nfpa_51b_2019' && v.fireWatchMinutes !== undefined && v.fireWatchMinutes < 60)
    ctx.addIssue({ code: 'custom', path: ['fireWatchMinutes'], message: NFPA_FIRE_WATCH_MESSAGE });
  if (v.hotWorkLelPct !== undefined && v.hotWorkLelPct > 0 && v.hotWorkLelReason !== undefined && !v.hotWorkLelReason)
    ctx.addIssue({ code: 'custom', path: ['hotWorkLelReason'], message: HOT_WORK_REASON_MESSAGE });
});
export type TenantSettingsInput = z.infer<typeof tenantSettingsInputSchema>;
