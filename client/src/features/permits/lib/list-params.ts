import { permitStates, workKinds, type PermitState, type WorkKind } from '@shared/permit/states';
import type { PermitsParams } from '../api/get-permits';

const sorts = ['number', 'title', 'state', 'validFrom', 'updatedAt'] as const;
const isoDate = /^\d{4}-\d{2}-\d{2}$/;
const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * The permits list's page, sort and filters, read from the address bar. Anything a hand-edited URL
 * gets wrong is dropped rather than sent, so the list still opens.
 */
export function readPermitsParams(p: URLSearchParams): PermitsParams {
  const page = Number(p.get('page'));
  const states = (p.get('state') ?? '').split(',').filter((s): s is PermitState => (permitStates as readonly string[]).includes(s));
  const kind = p.get('kind');
  const sort = p.get('sort');
  const opt = (key: string, ok: (v: string) => boolean) => {
    const v = p.get(key)?.trim();
    return v && ok(v) ? v : undefined;
  };
  return {
    page: Number.isInteger(page) && page >= 1 ? page : 1,
    pageSize: 25,
    state: states.length ? [...new Set(states)] : undefined,
    pipelineId: opt('pipelineId', (v) => uuid.test(v)),
    contractorOrganisationId: opt('contractorOrganisationId', (v) => uuid.test(v)),
    kind: kind && (workKinds as readonly string[]).includes(kind) ? (kind as WorkKind) : undefined,
    from: opt('from', (v) => isoDate.test(v)),
    to: opt('to', (v) => isoDate.test(v)),
    q: opt('q', (v) => v.length <= 100),
    sort: sort && (sorts as readonly string[]).includes(sort) ? (sort as PermitsParams['sort']) : 'updatedAt',
    dir: p.get('dir') === 'asc' ? 'asc' : 'desc',
  };
}

/** True when any filter (not page or sort) narrows the list. */
export const hasFilters = (q: PermitsParams) => Boolean(q.state?.length || q.pipelineId || q.contractorOrganisationId || q.kind || q.from || q.to || q.q);

/** A copy of the params with the patch applied; empty values remove the key. */
export function patchParams(current: URLSearchParams, patch: Record<string, string | undefined>): URLSearchParams {
  const next = new URLSearchParams(current);
  for (const [k, v] of Object.entries(patch)) {
    if (v) next.set(k, v);
    else next.delete(k);
  }
  return next;
}
