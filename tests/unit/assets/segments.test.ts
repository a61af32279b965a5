import { describe, expect, it } from 'vitest';
import { deriveSegments, segmentAt, type SegmentPointInput } from '@shared/assets/segments';

const valve = (tagCode: string, position: number, extra: Partial<SegmentPointInput> = {}): SegmentPointInput => ({ id: tagCode, tagCode, kind: 'block_valve', position, valveType: 'ball', remotelyOperable: false, ...extra });
const other = (tagCode: string, kind: SegmentPointInput['kind'], position: number): SegmentPointInput => ({ id: tagCode, tagCode, kind, position });

// Positions from the Cedar Run demo line (invented data); the arithmetic is plain subtraction.
const cedarRun = [
  valve('CR-BV-197', 19.7, { remotelyOperable: true }),
  other('CR-VT-150', 'vent', 15),
  valve('CR-BV-000', 0, { valveType: 'gate', remotelyOperable: true }),
  other('CR-DR-195', 'drain', 19.5),
  valve('CR-BV-149', 14.9),
  other('CR-DR-151', 'drain', 15.1),
  other('CR-VT-196', 'vent', 19.6),
  other('CR-EI-001', 'isolator', 0),
];

describe('deriveSegments', () => {
  it('when points arrive in any order, then each pair of adjacent valves makes one segment, in position order', () => {
    const segments = deriveSegments(cedarRun);
    expect(segments.map((s) => [s.index, s.from.tagCode, s.to.tagCode])).toEqual([
      [1, 'CR-BV-000', 'CR-BV-149'],
      [2, 'CR-BV-149', 'CR-BV-197'],
    ]);
  });

  it('when vents and drains lie between two valves, then the segment carries them and its length is the distance between the valves', () => {
    const [, s] = deriveSegments(cedarRun);
    expect(s.length).toBe(4.8);
    expect(s.ventIds).toEqual(['CR-VT-150', 'CR-VT-196']);
    expect(s.drainIds).toEqual(['CR-DR-151', 'CR-DR-195']);
    expect(s.pointIds).toEqual(['CR-VT-150', 'CR-DR-151', 'CR-DR-195', 'CR-VT-196']);
    expect(s.remoteEnd).toBe(true);
    expect(s.oneWayEnd).toBe(false);
  });

  it('when a point sits exactly at a valve, then it counts in both neighbouring segments', () => {
    const segments = deriveSegments([valve('A', 0), valve('B', 5), valve('C', 10), other('V', 'vent', 5)]);
    expect(segments.map((s) => s.ventIds)).toEqual([['V'], ['V']]);
  });

  it('when there are fewer than two valves, then there are no segments', () => {
    expect(deriveSegments([])).toEqual([]);
    expect(deriveSegments([valve('A', 3), other('V', 'vent', 4)])).toEqual([]);
  });

  it('when two valves share a position (double block), then they make a segment of length 0 and the order follows the tag code', () => {
    const segments = deriveSegments([valve('B-2', 7), valve('B-1', 7)]);
    expect(segments).toHaveLength(1);
    expect(segments[0]).toMatchObject({ from: { tagCode: 'B-1' }, to: { tagCode: 'B-2' }, length: 0 });
  });

  it('when an end of a segment is a check valve, then the segment says it is held one way only', () => {
    const [s] = deriveSegments([valve('A', 0), valve('B', 2, { valveType: 'check' })]);
    expect(s.oneWayEnd).toBe(true);
  });

  it('when positions carry float noise, then a point does not slip across a valve (0.1 + 0.2 is the valve at 0.3)', () => {
    const segments = deriveSegments([valve('A', 0), valve('B', 0.3), valve('C', 1), other('V', 'vent', 0.1 + 0.2)]);
    expect(segments.map((s) => s.ventIds)).toEqual([['V'], ['V']]);
    expect(segments[0].length).toBe(0.3);
  });
});

describe('segmentAt', () => {
  const segments = deriveSegments(cedarRun);
  it('when the repair is at MP 17.3, then it lies between CR-BV-149 and CR-BV-197', () => {
    expect(segmentAt(segments, 17.3)).toMatchObject({ from: { tagCode: 'CR-BV-149' }, to: { tagCode: 'CR-BV-197' } });
  });
  it('when the position is on a valve, then the segment downstream of it is given; at the last valve, the last segment', () => {
    expect(segmentAt(segments, 14.9)?.index).toBe(2);
    expect(segmentAt(segments, 19.7)?.index).toBe(2);
  });
  it('when the position is beyond the outer valves, then there is no segment', () => {
    expect(segmentAt(segments, 25)).toBeNull();
    expect(segmentAt(segments, -1)).toBeNull();
  });
});
