import type { TenantSettings } from '@shared/schemas/tenant-settings.schema';
import { AppError } from '../../errors/app-error';

const HOUR = 3_600_000;
const hours = (n: number) => (n === 1 ? '1 hour' : `${n} hours`);

/** A validity window lasts at most the tenant's longest permit (the maxPermitHours setting). */
export function requireWindowWithinMax(settings: Pick<TenantSettings, 'maxPermitHours'>, validFrom: Date, validTo: Date) {
  const max = settings.maxPermitHours;
  if (validTo.getTime() - validFrom.getTime() > max * HOUR)
    throw AppError.unprocessable(`A permit may be valid for at most ${hours(max)} in this tenant. Shorten the validity window.`, [
      { path: 'validTo', message: `End the permit at most ${hours(max)} after it starts.` },
    ]);
}

/** Re-validation brings the permit back into force from now, for no longer than a new permit could run. */
export function requireRevalidationWithinMax(settings: Pick<TenantSettings, 'maxPermitHours'>, now: Date, validTo: Date) {
  const max = settings.maxPermitHours;
  if (validTo.getTime() - now.getTime() > max * HOUR)
    throw AppError.unprocessable(`A permit may be re-validated for at most ${hours(max)} from now in this tenant. Choose an earlier end.`, [
      { path: 'validTo', message: `End the permit at most ${hours(max)} from now.` },
    ]);
}
