// The week ahead's meetings (finding PLAN-PERF): the sweep finds the same meetings as pairing every two
// permits would, keeps the first ten others of each permit by number and counts the rest.
import { describe, expect, it } from 'vitest';
import { findMeetings, type MeetingPermit } from '../../server/src/modules/plan/plan-meetings';

/** A small generator with a fixed seed, so a failure can be replayed. */
function random(seed: number) {
  let x = seed;
  return () => {
    x = (x * 1_103_515_245 + 12_345) % 2_147_483_648;
    return x / 2_147_483_648;
  };
}

/** Every two permits compared, as the old SQL did: closed ranges along the line, half-open windows in time. */
function pairEveryTwo(permits: MeetingPermit[]) {
  const work = permits.map(() => new Set<number>());
  const shared = permits.map(() => new Set<number>());
  const open = (a: MeetingPermit, b: MeetingPermit) => a.validFrom < b.validTo && b.validFrom < a.validTo;
  let total = 0;
  permits.forEach((a, i) =>
    permits.forEach((b, j) => {
      if (j <= i || !open(a, b)) return;
      if (a.pipelineId === b.pipelineId && a.fromPosition <= b.toPosition && b.fromPosition <= a.toPosition) {
        work[i].add(j);
        work[j].add(i);
        if (a.shown || b.shown) total += 1;
      }
      const common = b.pointIds.filter((point) => a.pointIds.includes(point));
      if (common.length) {
        shared[i].add(j);
        shared[j].add(i);
        if (a.shown || b.shown) total += common.length;
      }
    }),
  );
  return { work, shared, total };
}

function scene(seed: number, size: number): MeetingPermit[] {
  const next = random(seed);
  const pick = (n: number) => Math.floor(next() * n);
  return Array.from({ length: size }, (_, i): MeetingPermit => {
    const from = pick(20) / 2; // many equal and touching ends
    const start = pick(10) * 3_600_000_000;
    return {
      id: `00000000-0000-4000-8000-${String(pick(1e9)).padStart(6, '0')}${String(i).padStart(6, '0')}`,
      number: `P-${String(pick(1e6)).padStart(6, '0')}-${i}`,
      pipelineId: `line-${pick(2)}`,
      fromPosition: from,
      toPosition: from + pick(3) / 2,
      validFrom: start,
      validTo: start + (1 + pick(6)) * 3_600_000_000,
      shown: pick(3) > 0,
      pointIds: [...new Set(Array.from({ length: pick(3) }, () => `point-${pick(6)}`))],
    };
  });
}

describe('finding PLAN-PERF: the week ahead finds where permits meet without pairing every two', () => {
  it('when permits cross, touch and share points in every way, then each count is the one pairing every two gives, and each permit names the first ten by number', () => {
    for (let seed = 1; seed <= 20; seed += 1) {
      const permits = scene(seed, 80);
      const found = findMeetings(permits, 10);
      const expected = pairEveryTwo(permits);
      expect([...found.workOverlaps]).toEqual(expected.work.map((s) => s.size));
      expect([...found.sharedPoints]).toEqual(expected.shared.map((s) => s.size));
      expect(found.total).toBe(expected.total);
      const byNumber = (set: Set<number>) => [...set].sort((a, b) => (permits[a].number < permits[b].number ? -1 : 1)).slice(0, 10);
      permits.forEach((p, i) => {
        if (!p.shown) return;
        const named = (kind: 'work_range' | 'shared_point') =>
          new Set(found.listed.filter((m) => m.kind === kind && (m.first === i || m.second === i)).map((m) => (m.first === i ? m.second : m.first)));
        // What the permit names itself, plus meetings another shown permit names: never a meeting that did not happen.
        for (const other of byNumber(expected.work[i])) expect(named('work_range').has(other)).toBe(true);
        for (const other of named('work_range')) expect(expected.work[i].has(other)).toBe(true);
        for (const other of byNumber(expected.shared[i])) expect(named('shared_point').has(other)).toBe(true);
        for (const other of named('shared_point')) expect(expected.shared[i].has(other)).toBe(true);
      });
      for (const m of found.listed) {
        expect(permits[m.first].id < permits[m.second].id).toBe(true);
        expect(permits[m.first].shown || permits[m.second].shown).toBe(true);
      }
    }
  });

  it('when one stretch holds a thousand permits open at once, then the meetings listed stay at ten per permit while every one is counted', () => {
    const permits = Array.from({ length: 1000 }, (_, i): MeetingPermit => ({
      id: `00000000-0000-4000-8000-${String(i).padStart(12, '0')}`,
      number: `P-${String(i).padStart(4, '0')}`,
      pipelineId: 'line',
      fromPosition: 41.2,
      toPosition: 41.2,
      validFrom: 0,
      validTo: 1,
      shown: true,
      pointIds: [],
    }));
    const found = findMeetings(permits, 10);
    expect(found.total).toBe((1000 * 999) / 2);
    expect([...found.workOverlaps].every((n) => n === 999)).toBe(true);
    // The first eleven name one another; everyone else names the first ten.
    expect(found.listed.length).toBe((11 * 10) / 2 + 989 * 10);
  });
});
