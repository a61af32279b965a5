/**
 * Readings taken at a vent outlet: a vent is there to carry vapour away, so flammable gas at its
 * outlet is expected and is judged against the site's own vent-outlet limit, never the hot-work
 * limit (nor the general 10 %LEL). Oxygen, H₂S and CO are judged as anywhere else: someone stands
 * there to take the reading. The vent-outlet limit is common practice, no published source.
 */
import { assessAtmosphere, type AtmosphereAssessment, type AtmosphereLimits, type AtmosphereReadings, type GasResult } from '../calc/atmosphere';
import { REQUIRED_GASES } from './permit-limits';

export const VENT_OUTLET_SOURCE = 'Site vent-outlet limit: common practice, no published source (a vent is expected to carry vapour)';

export function assessVentOutlet(readings: AtmosphereReadings, limits: AtmosphereLimits, ventOutletLelPct: number): AtmosphereAssessment {
  const base = assessAtmosphere(readings, limits, { hotWork: false, required: REQUIRED_GASES });
  const { value } = base.gases.lel;
  const limit = { max: ventOutletLelPct, unit: '%LEL' as const };
  const lel: GasResult =
    value === null
      ? { ...base.gases.lel, limit, source: VENT_OUTLET_SOURCE }
      : value > ventOutletLelPct
        ? { value, limit, source: VENT_OUTLET_SOURCE, required: true, verdict: 'fail', message: `Flammable gas ${value} %LEL at the vent outlet is above the vent-outlet limit of ${ventOutletLelPct} %LEL.` }
        : { value, limit, source: VENT_OUTLET_SOURCE, required: true, verdict: 'pass', message: `Flammable gas ${value} %LEL at the vent outlet is within the vent-outlet limit of ${ventOutletLelPct} %LEL.` };
  const gases = { ...base.gases, lel };
  const failed = Object.values(gases).some((g) => g.verdict === 'fail' || (g.verdict === 'not measured' && g.required));
  return { verdict: failed ? 'fail' : 'pass', hotWork: false, gases };
}
