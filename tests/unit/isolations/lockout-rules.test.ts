import { describe, expect, it } from 'vitest';
import { appliedAfter, carriesDevice, earlierNotApplied, mayHandOver, removalNeedsException } from '@shared/isolations/lockout-rules';
import type { StepStatus } from '@shared/types/isolations';
import { applyFormSchema, toApplyInput } from '@client/features/isolations/lib/step-forms';

const step = (id: string, seq: number, status: StepStatus, appliedSeq: number | null = null) => ({ id, seq, status, appliedSeq });

describe('the lockout rules the screens and the server share', () => {
  it('finding I-3 (HSE HSG253): when steps went on in the order valve, plug, vent, then they come off vent, plug, valve, whatever times were typed', () => {
    const valve = step('valve', 1, 'verified', 1);
    const vent = step('vent', 2, 'applied', 3);
    const plug = step('plug', 3, 'verified', 2);
    const drain = step('drain', 4, 'removed', 4);
    const steps = [valve, vent, plug, drain];
    expect(appliedAfter(valve, steps).map((s) => s.id)).toEqual(['vent', 'plug']);
    expect(appliedAfter(plug, steps).map((s) => s.id)).toEqual(['vent']);
    expect(appliedAfter(vent, steps)).toEqual([]);
    expect(appliedAfter(step('planned', 5, 'planned'), steps)).toEqual([]);
  });

  it('finding I-4 (HSE HSG253): when an earlier step of the plan is not on yet, then applying a later one is out of order, naming the earlier ones in plan order', () => {
    const steps = [step('b', 2, 'planned'), step('a', 1, 'planned'), step('c', 3, 'planned'), step('d', 4, 'applied', 1)];
    expect(earlierNotApplied(steps[2], steps).map((s) => s.id)).toEqual(['a', 'b']);
    expect(earlierNotApplied(steps[1], steps)).toEqual([]);
  });

  it('finding I-1 (OSHA 29 CFR 1910.147(e)(3)): when a step carries a lock or a tag, then only its applier takes it off without the exception; a step without either is not personal', () => {
    const locked = { lockId: 'l', tagId: null, heldBy: 'ana' };
    expect(carriesDevice(locked)).toBe(true);
    expect(removalNeedsException(locked, 'ana')).toBe(false);
    expect(removalNeedsException(locked, 'sam')).toBe(true);
    expect(removalNeedsException({ lockId: null, tagId: 't', heldBy: 'ana' }, 'sam')).toBe(true);
    expect(removalNeedsException({ lockId: null, tagId: null, heldBy: 'ana' }, 'sam')).toBe(false);
  });

  it('issue 16 shift change (OSHA 29 CFR 1910.147(f)(4)): when a lock was handed over, then its holder takes it off without the exception and only the holder may hand it over again', () => {
    const handedOver = { lockId: 'l2', tagId: null, heldBy: 'sam', status: 'verified' as const };
    expect(removalNeedsException(handedOver, 'sam')).toBe(false);
    expect(removalNeedsException(handedOver, 'ana')).toBe(true);
    expect(mayHandOver(handedOver, 'sam')).toBe(true);
    expect(mayHandOver(handedOver, 'ana')).toBe(false);
    expect(mayHandOver({ ...handedOver, status: 'removed' }, 'sam')).toBe(false);
    expect(mayHandOver({ ...handedOver, lockId: null }, 'sam')).toBe(false);
  });

  it('finding I-4: when the apply form is out of the plan\'s order, then it asks for the reason and sends it; in order it asks nothing', () => {
    const typed = { lockId: '', tagId: '', appliedAt: '2026-12-02T07:00' };
    const missing = applyFormSchema('vent', true).safeParse(typed);
    expect(missing.error!.issues.map((i) => i.path.join('.'))).toEqual(['outOfOrderReason']);
    expect(applyFormSchema('vent').safeParse(typed).success).toBe(true);
    const v = { ...typed, outOfOrderReason: ' Bleed the trapped pressure first. ' };
    expect(toApplyInput('vent', v, '2026-12-02T07:00:00-06:00')).toEqual({ appliedAt: '2026-12-02T07:00:00-06:00', outOfOrderReason: 'Bleed the trapped pressure first.' });
  });
});
