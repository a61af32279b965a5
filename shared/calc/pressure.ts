/**
 * Gauge pressures in the units a bleed-point gauge reads. Both factors are exact by definition:
 * 1 psi = 1 lbf/in² = 0.45359237 kg × 9.80665 m/s² ÷ (0.0254 m)² = 6.894757293168361 kPa;
 * 1 bar = 100 kPa.
 */
export const gaugeUnits = ['psig', 'kPa', 'bar'] as const;
export type GaugeUnit = (typeof gaugeUnits)[number];
export const gaugeUnitLabels: Record<GaugeUnit, string> = { psig: 'psig', kPa: 'kPa (gauge)', bar: 'bar (gauge)' };

export const KPA_PER_PSI = (0.45359237 * 9.80665) / (0.0254 * 0.0254) / 1000;
export const KPA_PER_BAR = 100;

const perKpa: Record<GaugeUnit, number> = { psig: KPA_PER_PSI, kPa: 1, bar: KPA_PER_BAR };

export const toKpa = (value: number, unit: GaugeUnit): number => value * perKpa[unit];
export const fromKpa = (kpa: number, unit: GaugeUnit): number => kpa / perKpa[unit];
export const convertPressure = (value: number, from: GaugeUnit, to: GaugeUnit): number => (from === to ? value : fromKpa(toKpa(value, from), to));

/** "0.5 psig", rounded to what a gauge shows. */
export const formatPressure = (value: number, unit: GaugeUnit): string => `${Number(value.toFixed(unit === 'bar' ? 3 : 2))} ${unit}`;
