// Finding 2: the list pages read their address with the server's own query schemas (client/src/lib/list-query.ts).
import { describe, expect, it } from 'vitest';
import { createElement } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { MemoryRouter } from 'react-router-dom';
import fc from 'fast-check';
import type { z } from 'zod';
import { permitsQuerySchema } from '@shared/schemas/permit.schema';
import { usersQuerySchema } from '@shared/schemas/auth.schema';
import { inventoryQuerySchema, pipelinesQuerySchema } from '@shared/schemas/assets.schema';
import { boardQuerySchema } from '@shared/schemas/isolation.schema';
import { addressPending, patchParams, readListQuery, useListQuery } from '@client/lib/list-query';

const PIPE = '3f1c2a34-5b6d-4e7f-8a9b-0c1d2e3f4a5b';
const read = <S extends z.ZodType>(schema: S, address: string) => readListQuery(schema, new URLSearchParams(address));

/** The query as the client's api-client sends it: lists joined by commas, empty values left out. */
function toAddress(query: Record<string, unknown>) {
  const p = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) if (v !== undefined && v !== null && v !== '') p.set(k, Array.isArray(v) ? v.join(',') : String(v));
  return p;
}

const listSchemas = { permits: permitsQuerySchema, users: usersQuerySchema, pipelines: pipelinesQuerySchema, inventory: inventoryQuerySchema, board: boardQuerySchema };

describe('finding 2: list pages read their address with the server’s query schema', () => {
  it('when the address is empty, then the list opens with the schema’s own defaults', () => {
    expect(read(permitsQuerySchema, '')).toEqual({ page: 1, pageSize: 25, sort: 'updatedAt', dir: 'desc' });
    expect(read(usersQuerySchema, '')).toEqual({ page: 1, pageSize: 25, sort: 'name', dir: 'asc' });
    expect(read(boardQuerySchema, '')).toEqual({});
  });

  it('when the address is well formed, then every value comes through as the server would read it (numbers as numbers, the state list split)', () => {
    const q = read(permitsQuerySchema, `state=live,suspended&pipelineId=${PIPE}&page=3&pageSize=50&kind=hot_work&from=2026-06-01&to=2026-06-30&q=weld&sort=number&dir=asc`);
    expect(q).toEqual({ page: 3, pageSize: 50, state: ['live', 'suspended'], pipelineId: PIPE, kind: 'hot_work', from: '2026-06-01', to: '2026-06-30', q: 'weld', sort: 'number', dir: 'asc' });
  });

  it('when a hand-edited address has an unknown role, sort and direction, page 0 and a key the list does not know, then those fall back and the search stays', () => {
    expect(read(usersQuerySchema, 'role=wizard&sort=colour&dir=sideways&page=0&utm_source=mail&q=priya')).toEqual({ page: 1, pageSize: 25, q: 'priya', sort: 'name', dir: 'asc' });
  });

  it('when the state list holds unknown states among known ones, then only the unknown ones are dropped; when none is known, the filter is dropped', () => {
    expect(read(permitsQuerySchema, 'state=live,flying,closed,,draft').state).toEqual(['live', 'closed', 'draft']);
    expect(read(permitsQuerySchema, 'state=flying,melted')).not.toHaveProperty('state');
  });

  it('when the board is asked for a state it does not show (draft) or a pipeline that is not an id, then it shows everything', () => {
    expect(read(boardQuerySchema, 'permitState=draft&pipelineId=BM-10')).toEqual({});
    expect(read(boardQuerySchema, `permitState=live&pipelineId=${PIPE}`)).toEqual({ permitState: 'live', pipelineId: PIPE });
  });

  it('when a parameter is empty or given twice, then an empty one counts as not given and the first of two wins', () => {
    expect(read(pipelinesQuerySchema, 'q=&product=crude_oil&product=water')).toEqual({ page: 1, pageSize: 25, product: 'crude_oil' });
  });

  it('when any address at all is read, then it never throws and the request it makes is one the server accepts and reads back the same', () => {
    const names = [...new Set(Object.values(listSchemas).flatMap((s) => Object.keys(s.shape))), 'utm_source', 'constructor', '__proto__'];
    const address = fc.array(fc.tuple(fc.constantFrom(...names), fc.oneof(fc.string(), fc.constantFrom('0', '-1', '1e9', 'live,bogus', PIPE, 'asc', 'tag', '2026-02-30'))), { maxLength: 12 });
    fc.assert(
      fc.property(fc.constantFrom(...Object.values(listSchemas)), address, (schema: z.ZodType, pairs) => {
        const query = readListQuery(schema, new URLSearchParams(pairs)) as Record<string, unknown>;
        const sent = toAddress(query);
        const again = schema.safeParse(Object.fromEntries(sent));
        expect(again.success).toBe(true);
        expect(toAddress(again.data as Record<string, unknown>).toString()).toBe(sent.toString());
      }),
      { numRuns: 400 },
    );
  });

  it('when a filter is changed, then its key is set or removed and the others stay', () => {
    expect(patchParams(new URLSearchParams('q=weld&page=2'), { q: undefined, kind: 'hot_work' }).toString()).toBe('page=2&kind=hot_work');
  });

  it('when a page renders at a hand-edited address, then useListQuery hands it the parsed query', () => {
    function Probe() {
      return createElement('output', null, JSON.stringify(useListQuery(permitsQuerySchema).query));
    }
    const html = renderToStaticMarkup(createElement(MemoryRouter, { initialEntries: ['/permits?state=live,flying&page=2&sort=colour'] }, createElement(Probe)));
    expect(JSON.parse(html.replace(/^<output>|<\/output>$/g, '').replace(/&quot;/g, '"'))).toEqual({ page: 2, pageSize: 25, state: ['live'], sort: 'updatedAt', dir: 'desc' });
  });
});

describe('FIXME 1: a list never passes the rows of its last address for those of the new one', () => {
  it('FIXME 1: when a state is ticked and the page still renders the old address, then the list counts as updating until the address it renders moves', () => {
    const asked = { from: 'page=1', to: patchParams(new URLSearchParams('page=1'), { state: 'draft', page: undefined }).toString() };
    // The address bar already says state=draft; the page renders page=1 until the router's transition lands.
    expect(addressPending(asked, 'page=1')).toBe(true);
    expect(addressPending(asked, 'state=draft')).toBe(false);
    // Moved elsewhere meanwhile (Back, a link): not left waiting for an address that never comes.
    expect(addressPending(asked, 'state=closed')).toBe(false);
  });

  it('FIXME 1: when nothing was asked, or a change asked for the address already shown, then the list is not updating', () => {
    expect(addressPending(null, 'state=draft')).toBe(false);
    expect(addressPending({ from: 'state=draft', to: 'state=draft' }, 'state=draft')).toBe(false);
    function Probe() {
      return createElement('output', null, String(useListQuery(permitsQuerySchema).pending));
    }
    expect(renderToStaticMarkup(createElement(MemoryRouter, { initialEntries: ['/permits?state=draft'] }, createElement(Probe)))).toBe('<output>false</output>');
  });
});
