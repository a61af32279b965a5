import { positionPrefix, type LocationUnit } from '../schemas/assets.schema';

/** "MP 14.9" / "KP 7.25": at least one decimal, at most the three a position is stored with. */
export function formatPosition(value: number, unit: LocationUnit, withPrefix = true): string {
  const three = value.toFixed(3).replace(/0+$/, '');
  const text = three.endsWith('.') ? `${three}0` : three;
  return withPrefix ? `${positionPrefix[unit]} ${text}` : text;
}

export const unitWord: Record<LocationUnit, string> = { mi: 'miles', km: 'kilometres' };
