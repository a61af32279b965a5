import { z } from 'zod';
import { gaugeUnits } from '../calc/pressure';

/** Per-tenant settings (tenants.settings jsonb). Missing keys take these defaults. */
export const tenantSettingsSchema = z.object({
  maxPermitHours: z.number().int().min(1).max(24 * 31).default(72),
  gasTestWindowMinutes: z.number().int().min(5).max(240).default(30),
  gasTestIntervalMinutes: z.number().int().min(5).max(480).default(30),
  // The flammable limit at the point of hot work. 0 %LEL (stop at any flammable reading) is common
  // practice; no published figure sets a hot-work limit. OSHA 29 CFR 1910.146's 10 %LEL defines a
  // hazardous atmosphere for confined-space entry: Holdpoint uses it only as the outer bound. A tenant
  // raises the limit only with a stated reason (hotWorkLelReason), shown wherever the limit is shown;
  // without one the raise is ignored and 0 %LEL stays.
  hotWorkLelPct: z.number().min(0).max(10).default(0),
  hotWorkLelReason: z.string().trim().max(500).optional(),
  // NFPA 51B (2019 edition) §5.6.1.1 requires a fire watch of at least 60 minutes after hot work. A
  // tenant that works to the OSHA half hour (29 CFR 1910.252(a)(2)(iii)(B)) chooses it here in so many
  // words; a number below 60 without that choice is held at 60 (fireWatchFloorMinutes).
  fireWatchMinutes: z.number().int().min(30).max(480).default(60),
  fireWatchBasis: z.enum(['nfpa_51b_2019', 'osha_half_hour']).default('nfpa_51b_2019'),
  // A repeat gas test on live hot work overdue by more than this suspends the permit; none by default.
  gasTestOverdueGraceMinutes: z.number().int().min(0).max(60).default(0),
  // Flammable gas at a vent outlet is judged against this, never the hot-work limit (a vent is
  // expected to carry vapour). Common practice, no published source.
  ventOutletLelPct: z.number().min(0).max(100).default(25),
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
  // Long-term isolations (kept beyond their permits on an isolation certificate) are re-checked this
  // often: locks and tags intact, valves still closed, no pressure build-up (HSE HSG253). A week is
  // common practice, no published source.
  isolationRecheckHours: z.number().int().min(1).max(24 * 31).default(168),
  // Where the signed audit checkpoints are mailed (the operator's records office); none: stored only.
  recordsEmail: z.email().max(254).optional(),
  // How often the chain head is signed; daily by default.
  auditCheckpointHours: z.number().int().min(1).max(24 * 31).default(24),
});
export type TenantSettings = z.infer<typeof tenantSettingsSchema>;

/** The shortest fire watch the tenant's chosen basis allows: NFPA 51B (2019 edition) 60 minutes, or the OSHA half hour when chosen. */
export const fireWatchFloorMinutes = (s: Pick<TenantSettings, 'fireWatchBasis'>) => (s.fireWatchBasis === 'osha_half_hour' ? 30 : 60);
/** The tenant's fire watch length, never below its basis. */
export const tenantFireWatchMinutes = (s: Pick<TenantSettings, 'fireWatchBasis' | 'fireWatchMinutes'>) => Math.max(s.fireWatchMinutes, fireWatchFloorMinutes(s));

export function readTenantSettings(raw: unknown): TenantSettings {
  const parsed = tenantSettingsSchema.safeParse(raw ?? {});
  return parsed.success ? parsed.data : tenantSettingsSchema.parse({});
}
