import { useCallback, useMemo, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import type { z } from 'zod';

/** The most parameters an address can lose before the list falls back to its defaults. */
const MAX_ROUNDS = 20;

/**
 * A list's page, sort and filters, read from the address bar with the same query schema the server
 * checks them with. A value the schema refuses (a hand-edited or out-of-date link) is dropped and its
 * default used, so the list still opens; in a comma-separated list only the items refused are dropped.
 */
export function readListQuery<S extends z.ZodType>(schema: S, params: URLSearchParams): z.output<S> {
  // No prototype: a parameter called constructor or __proto__ is a key like any other (and refused as unknown).
  const raw: Record<string, string> = Object.create(null);
  for (const [key, value] of params) if (!Object.hasOwn(raw, key) && value.trim() !== '') raw[key] = value;
  for (let round = 0; round < MAX_ROUNDS; round++) {
    const result = schema.safeParse(raw);
    if (result.success) return result.data;
    if (!dropRefused(raw, result.error.issues)) break;
  }
  return schema.parse({});
}

/** Removes what the issues point at; false when they point at nothing that can be removed. */
function dropRefused(raw: Record<string, string>, issues: z.core.$ZodIssue[]) {
  const keys = new Set<string>();
  const items = new Map<string, Set<number>>();
  for (const issue of issues) {
    if (issue.code === 'unrecognized_keys') issue.keys.forEach((k) => keys.add(k));
    const [key, index] = issue.path;
    if (typeof key !== 'string' || !Object.hasOwn(raw, key)) continue;
    if (typeof index === 'number') items.set(key, (items.get(key) ?? new Set()).add(index));
    else keys.add(key);
  }
  let changed = false;
  for (const [key, refused] of items) {
    if (keys.has(key)) continue;
    const kept = raw[key].split(',').filter(Boolean).filter((_, i) => !refused.has(i));
    if (kept.length) raw[key] = kept.join(',');
    else delete raw[key];
    changed = true;
  }
  for (const key of keys) {
    if (Object.hasOwn(raw, key)) {
      delete raw[key];
      changed = true;
    }
  }
  return changed;
}

/** A copy of the params with the patch applied; empty values remove the key. */
export function patchParams(current: URLSearchParams, patch: Record<string, string | undefined>): URLSearchParams {
  const next = new URLSearchParams(current);
  for (const [k, v] of Object.entries(patch)) {
    if (v) next.set(k, v);
    else next.delete(k);
  }
  return next;
}

/** A change of the address the page asked for: the address it was asked on, and the one asked for. */
export interface AskedAddress {
  from: string;
  to: string;
}

/**
 * True while the page still renders the address a change was asked on. The router writes the new
 * address to the address bar at once but renders it in a transition, which lags on a slow device:
 * until then the list on screen belongs to the old address, so it must not pass for the new one.
 * Any move of the address (to the one asked for, or elsewhere) ends it.
 */
export function addressPending(asked: AskedAddress | null, current: string): boolean {
  return asked !== null && asked.from !== asked.to && asked.from === current;
}

/**
 * The list's query from the address bar (see readListQuery), with `set` to change some parameters
 * and `clear` to drop them all; both replace the history entry, so Back leaves the list. `pending`
 * is true from a change until the page renders the new address (see addressPending).
 * Pass a schema defined once at module level: a new one on every render re-reads the address.
 */
export function useListQuery<S extends z.ZodType>(schema: S) {
  const [params, setParams] = useSearchParams();
  const query = useMemo(() => readListQuery(schema, params), [schema, params]);
  const [asked, setAsked] = useState<AskedAddress | null>(null);
  const go = useCallback(
    (next: URLSearchParams) => {
      setAsked({ from: params.toString(), to: next.toString() });
      setParams(next, { replace: true });
    },
    [params, setParams],
  );
  const set = useCallback((patch: Record<string, string | undefined>) => go(patchParams(params, patch)), [go, params]);
  const clear = useCallback(() => go(new URLSearchParams()), [go]);
  return { query, set, clear, pending: addressPending(asked, params.toString()) };
}
