import { describe, expect, it } from 'vitest';
import { errorsByRow, moveRow, toPlanStep, type DraftRow } from '@client/features/isolations/lib/plan-draft';
import { planRange } from '@client/features/isolations/lib/step-rules';
import { stepActions } from '@shared/isolations/step-rules';
import { appliedAfter } from '@shared/isolations/lockout-rules';
import { applyFormSchema, toApplyInput } from '@client/features/isolations/lib/step-forms';
import type { IsolationStep } from '@shared/types/isolations';

const row = (key: string, extra: Partial<DraftRow> = {}): DraftRow => ({ key, pointId: `p-${key}`, kind: 'block_valve', label: key.toUpperCase(), position: 1, ...extra });

function step(id: string, extra: Partial<IsolationStep> = {}): IsolationStep {
  return {
    id, permitId: 'permit', seq: 1, pointId: null, label: id, position: 1, kind: 'block_valve', condition: 'closed_locked_tagged', status: 'planned', remotelyOperable: false,
    lockId: null, lockNumber: null, tagId: null, tagNumber: null, appliedBy: null, appliedByName: null, appliedAt: null, appliedEnteredLate: false, photoAttachmentId: null, remoteAckAt: null,
    remoteAckByName: null, verifiedBy: null, verifiedByName: null, verifiedAt: null, verificationMethod: null, verificationReading: null, verificationUnit: null,
    verificationNotes: null, removedByName: null, removedAt: null, removalNote: null, controlRoomAckAppliedAt: null, controlRoomAckRemovedAt: null, plugDiameterIn: null,
    plugAsBuilt: null, plugWarnings: [], plugWarningsAckAt: null, appliedSeq: null, appliedOutOfOrderReason: null, exceptionRecordedAt: null, exceptionAuthoriserId: null,
    exceptionAuthoriserName: null, removedUnderException: false, lineStopAsBuilt: null, heldBy: null, heldByName: null, handedOverAt: null, ...extra,
  };
}

describe('the plan editor', () => {
  it('when the server names steps.2.kind, then the message lands on the third row sent, even after that row moves', () => {
    const sent = [row('a'), row('b'), row('c')];
    const { rows, general } = errorsByRow(sent, [
      { path: 'steps.2.kind', message: 'CR-VT-150 is a vent, not a block valve.' },
      { path: 'steps', message: 'A plan needs at least one step.' },
      { path: 'steps.9.pointId', message: 'No such row.' },
    ]);
    expect(rows).toEqual({ c: { kind: 'CR-VT-150 is a vent, not a block valve.' } });
    expect(general).toEqual(['A plan needs at least one step.', 'No such row.']);
    expect(moveRow(sent, 'c', -1).map((r) => r.key)).toEqual(['a', 'c', 'b']);
  });

  it('when a row is at an end, then moving it past the end changes nothing', () => {
    const rows = [row('a'), row('b')];
    expect(moveRow(rows, 'a', -1)).toBe(rows);
    expect(moveRow(rows, 'b', 1)).toBe(rows);
  });

  it('when a row is a register point, then only its id and kind are sent; a temporary plug sends its label, position and diameter', () => {
    expect(toPlanStep(row('a', { plugDiameterIn: 10 }))).toEqual({ pointId: 'p-a', kind: 'block_valve' });
    expect(toPlanStep({ key: 'x', tempLabel: 'Plug west', tempPosition: 17.29, kind: 'plug', plugDiameterIn: 10.02, label: 'Plug west', position: 17.29 })).toEqual({
      tempLabel: 'Plug west', tempPosition: 17.29, kind: 'plug', plugDiameterIn: 10.02,
    });
  });
});

describe('which step actions fit', () => {
  it('when a permit is accepted, then a planned step may be applied; once applied it may be verified but not removed until hand-back', () => {
    expect(stepActions(step('a'), 'accepted')).toMatchObject({ apply: true, verify: false, remove: false });
    expect(stepActions(step('a'), 'approved').apply).toBe(false);
    const applied = step('a', { status: 'applied', appliedAt: '2026-12-02T07:00:00Z' });
    expect(stepActions(applied, 'isolated')).toMatchObject({ apply: false, verify: true, acknowledgeApplied: true, remove: false });
    expect(stepActions(applied, 'work_complete').remove).toBe(true);
  });

  it('when a remote valve is on without the control room inhibiting it, then that acknowledgement is offered, and plug warnings only while unacknowledged', () => {
    expect(stepActions(step('a', { status: 'verified', remotelyOperable: true }), 'isolated').acknowledgeRemote).toBe(true);
    expect(stepActions(step('a', { status: 'verified', remotelyOperable: true, remoteAckAt: 'x' }), 'isolated').acknowledgeRemote).toBe(false);
    const warned = step('p', { kind: 'plug', status: 'verified', plugWarnings: [{ code: 'plug_too_short', message: 'short' }] });
    expect(stepActions(warned, 'isolated').acknowledgePlugWarnings).toBe(true);
    expect(stepActions({ ...warned, plugWarningsAckAt: 'x' }, 'isolated').acknowledgePlugWarnings).toBe(false);
    expect(stepActions(step('r', { status: 'removed' }), 'work_complete')).toMatchObject({ acknowledgeRemoved: true, remove: false });
  });

  it('when later isolations are still on, then they are listed newest first (reverse order of application)', () => {
    const first = step('valve', { status: 'verified', appliedAt: '2026-12-02T07:00:00Z', appliedSeq: 1 });
    const steps = [
      first,
      step('drain', { status: 'verified', appliedAt: '2026-12-02T07:05:00Z', appliedSeq: 2 }),
      step('plug', { status: 'applied', appliedAt: '2026-12-02T07:10:00Z', appliedSeq: 3 }),
      step('vent', { status: 'removed', appliedAt: '2026-12-02T07:15:00Z', appliedSeq: 4 }),
    ];
    expect(appliedAfter(first, steps).map((s) => s.id)).toEqual(['plug', 'drain']);
    expect(appliedAfter(steps[2], steps)).toEqual([]);
  });

  it('when the plan spans 14.9 to 19.7 around a cut at 17.3, then the strip opens on that stretch with a margin', () => {
    const [lo, hi] = planRange([17.29, 17.31], [{ position: 14.9 }, { position: 19.7 }]);
    expect(lo).toBeCloseTo(14.9 - 0.72);
    expect(hi).toBeCloseTo(19.7 + 0.72);
  });
});

describe('the apply form', () => {
  it('when a block valve is applied without a lock and tag, then both are asked for; a vent needs neither', () => {
    const valve = applyFormSchema('block_valve').safeParse({ lockId: '', tagId: '', appliedAt: '2026-12-02T07:00' });
    expect(valve.success).toBe(false);
    expect(valve.error!.issues.map((i) => i.path.join('.')).sort()).toEqual(['lockId', 'tagId']);
    expect(applyFormSchema('vent').safeParse({ lockId: '', tagId: '', appliedAt: '2026-12-02T07:00' }).success).toBe(true);
  });

  it('when a plug is applied, then the as-built figures are required and sent as asBuilt', () => {
    const missing = applyFormSchema('plug').safeParse({ lockId: '', tagId: '', appliedAt: '2026-12-02T07:00', bentoniteLb: 31 });
    expect(missing.error!.issues.map((i) => i.path.join('.')).sort()).toEqual(['lengthIn', 'waterLb']);
    const v = { lockId: '', tagId: '', appliedAt: '2026-12-02T07:00', bentoniteLb: 31.5, waterLb: 31.5, lengthIn: 15.5 };
    expect(toApplyInput('plug', v, '2026-12-02T07:00:00-06:00')).toEqual({ appliedAt: '2026-12-02T07:00:00-06:00', asBuilt: { bentoniteLb: 31.5, waterLb: 31.5, lengthIn: 15.5 } });
  });
});
