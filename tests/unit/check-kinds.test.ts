// Issue 17: the check form offers only what the permit has: no vent check on a permit with no vent.
import { describe, expect, it } from 'vitest';
import { offeredCheckKinds } from '@shared/gas-tests/check-kinds';
import { checkInputSchema } from '@shared/schemas/timed-checks.schema';

describe('issue 17: which checks the form offers', () => {
  it('when a permit has plugs in place but no vent, then no vent check is offered', () => {
    expect(offeredCheckKinds([{ kind: 'block_valve', status: 'verified' }, { kind: 'plug', status: 'verified' }], false)).toEqual(['plug']);
  });

  it('when its vent was removed or only planned, then no vent check is offered; while hot work is under way the fire watch is', () => {
    expect(offeredCheckKinds([{ kind: 'vent', status: 'removed' }, { kind: 'vent', status: 'planned' }, { kind: 'plug', status: 'applied' }], true)).toEqual(['plug', 'fire_watch']);
    expect(offeredCheckKinds([{ kind: 'vent', status: 'applied' }, { kind: 'plug', status: 'verified' }], true)).toEqual(['vent', 'plug', 'fire_watch']);
    expect(offeredCheckKinds([], false)).toEqual([]);
  });

  it('when "all plugs of this permit" is chosen, then the form sends no step and the check is valid', () => {
    // The form turns the empty choice into nothing, as it does for its other selects.
    const base = { kind: 'plug', checkedAt: '2026-12-02T15:00:00Z', face: 'intact' };
    expect(checkInputSchema.safeParse({ ...base, isolationStepId: undefined }).success).toBe(true);
    expect(checkInputSchema.safeParse({ ...base, isolationStepId: '' }).success).toBe(false);
  });
});
