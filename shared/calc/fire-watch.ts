/**
 * When the fire watch after hot work may end.
 *
 * OSHA 29 CFR 1910.252(a)(2)(iii)(B) requires the watch for at least 30 minutes after welding or
 * cutting ends; NFPA 51B (2019 edition) §5.6.1.1 requires at least 1 hour ("shall"), and the permit authorising
 * individual may add up to 3 hours of fire monitoring. The default follows NFPA 51B, the stricter.
 */
import { addMinutes } from 'date-fns';
import { CalcInputError, requireNumber } from './units';

export const FIRE_WATCH_DEFAULT_MINUTES = 60;
export const FIRE_WATCH_MIN_MINUTES = 30;
/** Twice the longest NFPA 51B asks for (1 h watch + 3 h monitoring): longer is likelier a slip than a plan. */
export const FIRE_WATCH_MAX_MINUTES = 8 * 60;

export function fireWatchEnd(hotWorkEndedAt: Date, minutes: number = FIRE_WATCH_DEFAULT_MINUTES): Date {
  if (!(hotWorkEndedAt instanceof Date) || Number.isNaN(hotWorkEndedAt.getTime())) {
    throw new CalcInputError('hotWorkEndedAt', 'Enter the date and time hot work ended.');
  }
  requireNumber('minutes', minutes, {
    label: 'fire watch length',
    unit: 'min',
    min: FIRE_WATCH_MIN_MINUTES,
    reason:
      'OSHA 29 CFR 1910.252(a)(2)(iii)(B) requires at least 30 minutes after welding or cutting ends; ' +
      'NFPA 51B (2019 edition) requires 60.',
  });
  if (minutes > FIRE_WATCH_MAX_MINUTES) {
    throw new CalcInputError(
      'minutes',
      `A fire watch of ${minutes} minutes is longer than Holdpoint accepts (${FIRE_WATCH_MAX_MINUTES}); ` +
        'check the unit is minutes.',
    );
  }
  if (!Number.isInteger(minutes)) {
    throw new CalcInputError('minutes', `The fire watch length must be whole minutes (got ${minutes}).`);
  }
  return addMinutes(hotWorkEndedAt, minutes);
}
