import { describe, expect, it } from 'vitest';
import { updatePermitInputSchema } from '@shared/schemas/permit.schema';

describe('editing a draft permit', () => {
  it('when only the title is sent, then the scope, method, hazards, PPE and fire watch are left out rather than reset to their defaults', () => {
    expect(updatePermitInputSchema.parse({ version: 2, title: 'Sleeve repair at MP 17.3' })).toEqual({ version: 2, title: 'Sleeve repair at MP 17.3' });
  });

  it('when a fire watch under 30 minutes is sent, then it is still refused (OSHA 29 CFR 1910.252(a)(2)(iii)(B))', () => {
    expect(updatePermitInputSchema.safeParse({ version: 2, fireWatchMinutes: 20 }).success).toBe(false);
  });
});
