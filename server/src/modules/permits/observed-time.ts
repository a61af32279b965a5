import { QueryTypes } from 'sequelize';
import { formatInZone } from '@shared/time/zone';
import { readTenantSettings } from '@shared/schemas/tenant-settings.schema';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import type { loadTenantSettings } from '../tenants/tenant-settings';
import type { PermitRow } from './permits.repository';

/** How far ahead of the server's clock a device's clock may run. */
export const CLOCK_SKEW_MS = 2 * 60_000;
/** Written down more than this after the event, an observation is marked "entered late". */
export const ENTERED_LATE_AFTER_MS = 5 * 60_000;

type SiteSettings = Awaited<ReturnType<typeof loadTenantSettings>>;

/** Limits on a time someone gives for what they saw or did on a permit (a gas test, a check, an isolation). */
export interface ObservationBounds {
  now: Date;
  /** When the permit was last approved (issued); null for a permit that has no approval on record. */
  issuedAt: Date | null;
  lateEntryWindowMinutes: number;
  timeZone: string;
  /** The tenant's settings, read in the same statement, for callers that need them anyway. */
  settings: SiteSettings;
}

/** Inside withTenant. One statement: the tenant's settings and when the permit was issued. */
export async function observationBounds(deps: AppDeps, permit: PermitRow): Promise<ObservationBounds> {
  const [row] = await deps.sequelize.query<{ settings: unknown; time_zone: string; location_unit: 'mi' | 'km'; issued_at: Date | null }>(
    `SELECT t.settings, t.time_zone, t.location_unit,
            (SELECT max(s.signed_at) FROM permit_signatures s WHERE s.tenant_id = t.id AND s.permit_id = :permitId AND s.event = 'approve') AS issued_at
     FROM tenants t WHERE t.id = :tenantId`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id }, type: QueryTypes.SELECT },
  );
  const settings: SiteSettings = { ...readTenantSettings(row?.settings), timeZone: row?.time_zone ?? 'UTC', locationUnit: row?.location_unit ?? 'mi' };
  return {
    now: deps.clock.now(),
    issuedAt: row?.issued_at ? new Date(row.issued_at) : null,
    lateEntryWindowMinutes: settings.lateEntryWindowMinutes,
    timeZone: settings.timeZone,
    settings,
  };
}

/** What is wrong with the time, in words for the person who typed it; null when it is acceptable. */
export function observedTimeProblem(b: ObservationBounds, at: Date): string | null {
  const t = at.getTime();
  if (t > b.now.getTime() + CLOCK_SKEW_MS) return `${formatInZone(at, b.timeZone)} is in the future. Give the time it was done, not a time to come.`;
  // Forms take times to the minute: a time in the minute the permit was issued counts as after it.
  if (b.issuedAt && t < startOfMinute(b.issuedAt))
    return `${formatInZone(at, b.timeZone)} is before the permit was issued (${formatInZone(b.issuedAt, b.timeZone)}). Give the time it was done on this permit.`;
  if (t < b.now.getTime() - b.lateEntryWindowMinutes * 60_000)
    return `${formatInZone(at, b.timeZone)} is more than ${b.lateEntryWindowMinutes} minutes ago. This site accepts entries at most ${b.lateEntryWindowMinutes} minutes after the event.`;
  return null;
}

const startOfMinute = (d: Date) => Math.floor(d.getTime() / 60_000) * 60_000;

export function isEnteredLate(b: ObservationBounds, at: Date): boolean {
  return b.now.getTime() - at.getTime() > ENTERED_LATE_AFTER_MS;
}

/** Refuses (422) a time outside the permit's life, in the future or too long ago; says whether it is entered late. */
export function checkObservedTime(b: ObservationBounds, at: Date, path: string): { enteredLate: boolean } {
  const problem = observedTimeProblem(b, at);
  if (problem) throw AppError.unprocessable(problem, [{ path, message: problem }]);
  return { enteredLate: isEnteredLate(b, at) };
}
