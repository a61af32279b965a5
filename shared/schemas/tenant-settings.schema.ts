import { z } from 'zod';
import { gaugeUnits } from '../calc/pressure';

/** Per-tenant settings (tenants.settings jsonb). Missing keys take these defaults. */
export const tenantSettingsSchema = z.object({
  maxPermitHours: z.number().int().min(1).max(24 * 31).default(72),
  gasTestWindowMinutes: z.number().int().min(5).max(240).default(30),
  gasTestIntervalMinutes: z.number().int().min(5).max(480).default(30),
  // Operator practice: many require 0 %LEL between the isolation and hot work; at most 10 %LEL (OSHA 29 CFR 1910.146).
  hotWorkLelPct: z.number().min(0).max(10).default(0),
  // NFPA 51B (2019): at least 60 minutes; OSHA 29 CFR 1910.252(a)(2)(iii)(B): at least 30.
  fireWatchMinutes: z.number().int().min(30).max(480).default(60),
  ventCheckIntervalMinutes: z.number().int().min(5).max(480).default(60),
  plugCheckIntervalMinutes: z.number().int().min(5).max(480).default(60),
  groupLockout: z.enum(['per_permit', 'per_person']).default('per_permit'),
  requireDailyBumpTest: z.boolean().default(true),
  // How long after the event a gas test, check or isolation may still be written down (it is then marked "entered late").
  lateEntryWindowMinutes: z.number().int().min(5).max(24 * 60).default(60),
  // Proving an isolated section dead (HSE HSG253): the gauge at a bleed or vent must read at most this
  // and hold that long without build-up. Dead means no pressure, so the limit starts at zero; a site
  // whose gauges cannot show zero sets its own. The hold time is common practice, no published source.
  provingMaxPressure: z.number().min(0).max(100).default(0),
  provingPressureUnit: z.enum(gaugeUnits).default('psig'),
  provingHoldMinutes: z.number().int().min(5).max(240).default(15),
});
export type TenantSettings = z.infer<typeof tenantSettingsSchema>;

export function readTenantSettings(raw: unknown): TenantSettings {
  const parsed = tenantSettingsSchema.safeParse(raw ?? {});
  return parsed.success ? parsed.data : tenantSettingsSchema.parse({});
}
