import type { AtmosphereAssessment, Gas } from '../calc/atmosphere';

export const GAS_SHORT: Record<Gas, string> = { o2: 'O2', lel: 'LEL', h2s: 'H2S', co: 'CO' };

/**
 * The failing readings of a test in a few words, for audit reasons and mail:
 * "LEL 12 %LEL above the 0 %LEL limit; O2 18.9 %vol below the 19.5 %vol minimum".
 */
export function failureSummary(a: AtmosphereAssessment): string {
  const parts: string[] = [];
  for (const gas of Object.keys(a.gases) as Gas[]) {
    const r = a.gases[gas];
    const name = GAS_SHORT[gas];
    const unit = r.limit.unit;
    if (r.verdict === 'not measured' && r.required) parts.push(`${name} not measured`);
    if (r.verdict !== 'fail' || r.value === null) continue;
    if (r.limit.min !== undefined && r.value < r.limit.min) parts.push(`${name} ${r.value} ${unit} below the ${r.limit.min} ${unit} minimum`);
    else if (r.limit.max !== undefined) parts.push(`${name} ${r.value} ${unit} above the ${r.limit.max} ${unit} limit${gas === 'lel' && a.hotWork ? ' for hot work' : ''}`);
  }
  return parts.join('; ');
}
