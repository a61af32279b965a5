import { describe, expect, it } from 'vitest';
import { pointsOutsideSection, sectionBounds } from '@shared/isolations/section';

// HSE HSG253 (common practice, not quoted): the section to be worked on is the stretch enclosed by the
// isolating devices; it is vented, drained and proved dead between them.
const range = { from: 17.29, to: 17.31 };
const plan = [
  { label: 'BV-1', kind: 'block_valve', position: 16.5 },
  { label: 'BV-0', kind: 'block_valve', position: 15.0 },
  { label: 'BV-2', kind: 'block_valve', position: 18.0 },
  { label: 'VT-IN', kind: 'vent', position: 17.0 },
  { label: 'PLUG', kind: 'plug', position: 17.29 },
];

describe('the isolated section of a plan (issue 16)', () => {
  it('issue 16 section-1 (HSE HSG253): when the plan has devices on both sides, then the section runs between the innermost one on each side', () => {
    const { upstream, downstream } = sectionBounds(plan, range);
    expect([upstream?.label, downstream?.label]).toEqual(['BV-1', 'BV-2']);
  });

  it('issue 16 section-2 (HSE HSG253): when a vent, drain or plug lies beyond an isolating device, then it is named as outside the section; points inside and devices are not', () => {
    const outside = pointsOutsideSection([...plan, { label: 'DR-OUT', kind: 'drain', position: 15.8 }, { label: 'VT-FAR', kind: 'vent', position: 18.4 }], range);
    expect(outside.map((o) => o.point.label)).toEqual(['DR-OUT', 'VT-FAR']);
    expect(outside[0].message).toBe(
      'DR-OUT (drain) lies outside the isolated section, beyond BV-1: it is on line that is still live, so it does not bleed or prove the section being worked on. Choose one between the isolations.',
    );
    expect(pointsOutsideSection(plan, range)).toEqual([]);
  });

  it('issue 16 section-3: when a side has no isolating device yet, then nothing on that side is called outside (the missing device is its own warning)', () => {
    expect(pointsOutsideSection([{ label: 'VT-1', kind: 'vent', position: 10 }, { label: 'BV-2', kind: 'block_valve', position: 18 }], range)).toEqual([]);
  });
});
