// Issue 17: no code or machine time reaches a person. zod's own words for a value outside a list name
// the codes; the one place issues become messages replaces them, and a schema's own words are kept.
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { acknowledgeStepInputSchema, removeStepInputSchema } from '@shared/schemas/isolation.schema';
import { auditActionLabel, positionText, stateLabel } from '@shared/permit/record-words';
import { zodDetails } from '../../server/src/middleware/validate';

const detailsOf = (schema: z.ZodType, value: unknown) => {
  const r = schema.safeParse(value);
  if (r.success) throw new Error('expected a refusal');
  return zodDetails(r.error);
};

describe('issue 17: plain words for choices', () => {
  it('when a plug removal names an outcome that is not offered, then the answer says what to choose in words', () => {
    expect(detailsOf(removeStepInputSchema, { plugOutcome: 'blown_out' })).toEqual([
      { path: 'plugOutcome', message: 'Say whether the plug was removed or left to be displaced by product.' },
    ]);
  });

  it('when any list without its own message gets a value outside it, then no code or quote reaches the answer', () => {
    const [detail] = detailsOf(acknowledgeStepInputSchema, { what: 'everything' });
    expect(detail).toEqual({ path: 'what', message: 'Choose one of the options offered.' });
    const [other] = detailsOf(z.strictObject({ unit: z.enum(['psig', 'kPa_gauge']) }), { unit: 'bar' });
    expect(other.message).not.toMatch(/["_|]|expected/);
  });

  it('when a schema wrote its own message for a choice, then that message is kept', () => {
    expect(detailsOf(z.strictObject({ kind: z.enum(['vent', 'plug'], { message: 'Say what was checked.' }) }), { kind: 'x' })).toEqual([{ path: 'kind', message: 'Say what was checked.' }]);
  });

  it('when the record is written for a person, then actions, states and positions are words ("MP 21.998")', () => {
    expect(auditActionLabel('plan_saved')).toBe('Isolation plan saved');
    expect(auditActionLabel('hand_back')).toBe('Hand back');
    expect(auditActionLabel('vent_check_recorded')).toBe('Vent check recorded');
    expect(stateLabel('work_complete')).toBe('Work complete');
    expect(positionText(21.998, 'mi')).toBe('MP 21.998');
    expect(positionText(3.25, 'km')).toBe('KP 3.25');
    expect(positionText(17.3, 'mi')).toBe('MP 17.3');
  });
});
