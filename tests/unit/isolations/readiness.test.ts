// What counts as an isolation and where it stands against the work (shared/isolations/readiness.ts).
import { describe, expect, it } from 'vitest';
import { coverSides, isIsolatingKind, noDeadEnds, planGaps, sidesClosedBy } from '@shared/isolations/readiness';
import { convertPressure, KPA_PER_PSI, toKpa } from '@shared/calc/pressure';

const range = { from: 17.299, to: 17.301 };

describe('isolating devices and the sides of the work', () => {
  // OSHA 29 CFR 1910.147(b): a line valve, a blind, a block and a circuit breaker isolate; a vent does not.
  it('finding J1: when the kinds are sorted, then valves, blinds, line stops and isolators isolate and vents, drains and mud plugs do not', () => {
    expect(['block_valve', 'blind', 'line_stop', 'isolator'].every(isIsolatingKind)).toBe(true);
    expect(['vent', 'drain', 'plug'].some(isIsolatingKind)).toBe(false);
  });

  it('finding J1: when a device sits at the ends of the work range, then it closes that side; inside the range it closes neither', () => {
    expect(sidesClosedBy(14.9, range)).toEqual(['upstream']);
    expect(sidesClosedBy(17.299, range)).toEqual(['upstream']);
    expect(sidesClosedBy(19.7, range)).toEqual(['downstream']);
    expect(sidesClosedBy(17.3, range)).toEqual([]);
    // Work on the valve itself: the valve's position is both ends of the range.
    expect(sidesClosedBy(14.9, { from: 14.9, to: 14.9 })).toEqual(['upstream', 'downstream']);
  });

  it('finding J1: when the plan has an isolator and mud plugs only, then no side of the line is closed (an isolator stops a pump, not the product in the line)', () => {
    const steps = [
      { kind: 'isolator', position: 0, verified: true },
      { kind: 'plug', position: 17.299, verified: true },
      { kind: 'plug', position: 17.301, verified: true },
    ];
    const sides = coverSides(steps, range, noDeadEnds);
    expect(sides.map((s) => s.planned)).toEqual([0, 0]);
    const gaps = planGaps(1, sides);
    expect(gaps).toHaveLength(2);
    expect(gaps[0]).toMatch(/^No isolating device upstream of the work/);
    expect(gaps[1]).toMatch(/^No isolating device downstream of the work/);
  });

  it('finding J1: when one side is declared a dead end, then only the open side needs a device', () => {
    const sides = coverSides([{ kind: 'block_valve', position: 14.9, verified: false }], range, { upstream: null, downstream: 'Branch cut and capped at MP 17.4.' });
    expect(planGaps(1, sides)).toEqual([]);
    expect(sides).toEqual([
      { side: 'upstream', deadEnd: null, planned: 1, verified: 0 },
      { side: 'downstream', deadEnd: 'Branch cut and capped at MP 17.4.', planned: 0, verified: 0 },
    ]);
  });
});

describe('gauge pressures', () => {
  // 1 psi = 0.45359237 kg × 9.80665 m/s² ÷ (0.0254 m)² (exact definitions); 1 bar = 100 kPa.
  it('when a reading is converted, then psi, kPa and bar agree to the defined factors', () => {
    expect(KPA_PER_PSI).toBeCloseTo(6.894757293168, 12);
    expect(toKpa(1, 'bar')).toBe(100);
    expect(convertPressure(14.503773773, 'psig', 'bar')).toBeCloseTo(1, 9);
    expect(convertPressure(0, 'kPa', 'psig')).toBe(0);
  });
});
