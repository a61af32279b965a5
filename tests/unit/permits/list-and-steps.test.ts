import { describe, expect, it } from 'vitest';
import { hasFilters } from '@client/features/permits/lib/list-params';
import { patchParams, readListQuery } from '@client/lib/list-query';
import { fieldOfPath, firstStepWith, formSteps } from '@client/features/permits/lib/form-steps';
import { schematicOverlays } from '@client/features/permits/lib/schematic-overlays';
import { createPermitInputSchema, permitsQuerySchema } from '@shared/schemas/permit.schema';

const PIPE = '3f1c2a34-5b6d-4e7f-8a9b-0c1d2e3f4a5b';

describe('permits list address', () => {
  it('when the URL carries states, a pipeline and a page, then they become the API query', () => {
    const q = readListQuery(permitsQuerySchema, new URLSearchParams(`state=live,suspended&pipelineId=${PIPE}&page=3&sort=number&dir=asc`));
    expect(q).toMatchObject({ page: 3, state: ['live', 'suspended'], pipelineId: PIPE, sort: 'number', dir: 'asc' });
    expect(hasFilters(q)).toBe(true);
  });

  it('when a hand-edited URL has unknown states, a bad id and page 0, then those are dropped and page 1 is shown', () => {
    const q = readListQuery(permitsQuerySchema, new URLSearchParams('state=live,flying&pipelineId=nope&page=0&kind=juggling&from=tomorrow&sort=colour'));
    expect(q).toEqual({ page: 1, pageSize: 25, state: ['live'], sort: 'updatedAt', dir: 'desc' });
  });

  it('when a filter is cleared, then its key leaves the URL and the others stay', () => {
    expect(patchParams(new URLSearchParams('q=weld&page=2'), { q: undefined, kind: 'hot_work' }).toString()).toBe('page=2&kind=hot_work');
  });
});

describe('request form steps', () => {
  it('when every field of the create schema is listed, then each belongs to exactly one step', () => {
    const listed = formSteps.flatMap((s) => s.fields).sort();
    expect(listed).toEqual(Object.keys(createPermitInputSchema.shape).sort());
  });

  it('when the server names "ppe.2" or "validTo", then the form shows it on PPE (step 4) or on the end time (step 3)', () => {
    expect(fieldOfPath('ppe.2')).toBe('ppe');
    expect(firstStepWith([fieldOfPath('validTo')!])).toBe(2);
    expect(firstStepWith(['ppe', 'title'])).toBe(0);
    expect(fieldOfPath('version')).toBeNull();
  });
});

describe('schematic overlays', () => {
  it('when steps are applied, verified, planned and removed, then only those in place are marked', () => {
    const o = schematicOverlays({ fromPosition: 17.29, toPosition: 17.31 }, [
      { id: 'a', seq: 1, pointId: 'p1', label: 'CR-BV-150', position: 15, kind: 'block_valve', status: 'verified' },
      { id: 'b', seq: 2, pointId: null, label: 'Plug W', position: 17.28, kind: 'plug', status: 'applied' },
      { id: 'c', seq: 3, pointId: 'p3', label: 'CR-VT-171', position: 17.1, kind: 'vent', status: 'planned' },
      { id: 'd', seq: 4, pointId: 'p4', label: 'CR-BV-190', position: 19, kind: 'block_valve', status: 'removed' },
    ]);
    expect(o).toEqual({ workRange: [17.29, 17.31], isolatedPointIds: ['p1'], plugPositions: [17.28] });
  });
});
