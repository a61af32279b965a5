/**
 * Plug weights, water and lengths in a tenant's units, for the screens: kg, litres and mm where
 * the tenant works in kilometres; lb, US gallons and inches otherwise. Records keep lb and in, so
 * `toLb` turns a weight typed in the tenant's unit into the recorded one. Water is shown by weight
 * and by volume (8.33 lb per US gallon, as in mud-weight formulas).
 */
import { WATER_LB_PER_US_GAL } from './mud-plug';
import { KG_PER_LB, L_PER_US_GAL, MM_PER_IN } from './units';

const one = (v: number) => Number(v.toFixed(1));
const two = (v: number) => Number(v.toFixed(2));

export function plugUnits(metric: boolean) {
  return {
    metric,
    massUnit: metric ? 'kg' : 'lb',
    mass: (lb: number) => (metric ? `${two(lb * KG_PER_LB)} kg` : `${one(lb)} lb`),
    water: (lb: number) => {
      const gal = lb / WATER_LB_PER_US_GAL;
      return metric ? `${two(lb * KG_PER_LB)} kg (${one(gal * L_PER_US_GAL)} L)` : `${one(lb)} lb (${two(gal)} US gal)`;
    },
    length: (inches: number) => (metric ? `${Math.round(inches * MM_PER_IN)} mm (${one(inches)} in)` : `${one(inches)} in`),
    toLb: (typed: number | undefined) => (typed === undefined || !metric ? typed : typed / KG_PER_LB),
  };
}
