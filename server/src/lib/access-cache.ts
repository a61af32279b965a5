import { performance } from 'node:perf_hooks';
import { defineAbilityFor, type AppAbility } from '@shared/abilities/define-ability';
import type { AppDeps } from '../deps';
import { changeFeed } from './change-feed';
import { loadActor } from './actor';

type Loaded = NonNullable<Awaited<ReturnType<typeof loadActor>>>;

/** The signed-in person as one request sees them: who they are, every membership, the actor and rules of the active tenant. */
export interface SessionAccess extends Loaded {
  ability: AppAbility | null;
  /** Answers worked out from this access and nothing newer (the /me answer), kept as long as it is. */
  memo: Map<string, Promise<unknown>>;
}

interface Entry {
  userId: string;
  tenantId: string | null;
  version: number;
  access: SessionAccess;
  until: number;
}

const KEEP_MS = 30_000;
const MAX_ENTRIES = 10_000;

/**
 * Per process, per session: the person, their memberships and rules, kept for up to 30 seconds so a
 * signed-in request needs no statement to know who is asking. A copy is used only while the
 * person's access version (read in the same statement as the session) is the one it was built
 * with, so a role change, removal or disabled account made by any process counts on the very next
 * request; the change feed drops the copies everywhere at once as well. Only a cache: losing it
 * costs two statements.
 */
class AccessCache {
  private entries = new Map<string, Entry>();
  private listening = false;

  constructor(private readonly deps: AppDeps) {}

  async load(sessionId: string, userId: string, tenantId: string | null, version: number | null): Promise<SessionAccess | null> {
    const now = performance.now();
    const hit = this.entries.get(sessionId);
    if (hit && version !== null && hit.version === version && hit.userId === userId && hit.tenantId === tenantId && hit.until > now) return hit.access;
    if (hit) this.entries.delete(sessionId);
    const loaded = await loadActor(this.deps.sequelize, userId, tenantId);
    if (!loaded) return null;
    const access: SessionAccess = { ...loaded, ability: loaded.actor ? defineAbilityFor(loaded.actor) : null, memo: new Map() };
    if (version !== null) {
      this.listen();
      if (this.entries.size >= MAX_ENTRIES) this.sweep(now);
      this.entries.set(sessionId, { userId, tenantId, version, access, until: now + KEEP_MS });
    }
    return access;
  }

  /** Works `make` out once per kept access; a failure is not kept. */
  memo<T>(access: SessionAccess, key: string, make: () => Promise<T>): Promise<T> {
    let p = access.memo.get(key) as Promise<T> | undefined;
    if (!p) {
      p = make();
      access.memo.set(key, p);
      p.catch(() => access.memo.delete(key));
    }
    return p;
  }

  dropSession(sessionId: string) {
    this.entries.delete(sessionId);
  }

  dropUser(userId: string) {
    for (const [sid, e] of this.entries) if (e.userId === userId) this.entries.delete(sid);
  }

  get size() {
    return this.entries.size;
  }

  private sweep(now: number) {
    for (const [sid, e] of this.entries) if (e.until <= now) this.entries.delete(sid);
    // Still full: drop the oldest (a Map keeps insertion order).
    for (const sid of this.entries.keys()) {
      if (this.entries.size < MAX_ENTRIES) break;
      this.entries.delete(sid);
    }
  }

  private listen() {
    if (this.listening) return;
    this.listening = true;
    changeFeed(this.deps).subscribe((change) => {
      if (change.kind === 'access' && typeof change.userId === 'string') this.dropUser(change.userId);
      // The feed was down: changes may have gone unheard.
      else if (change.kind === 'resync') this.entries.clear();
    });
  }
}

const caches = new WeakMap<AppDeps, AccessCache>();

export function accessCache(deps: AppDeps): AccessCache {
  let cache = caches.get(deps);
  if (!cache) {
    cache = new AccessCache(deps);
    caches.set(deps, cache);
  }
  return cache;
}

/**
 * Tells every server process that this person's kept access is out of date (sign-out). Best effort: the
 * session row is already gone, so no process can reach a kept copy through it; this frees the memory.
 */
export async function announceAccessChanged(deps: AppDeps, userId: string) {
  accessCache(deps).dropUser(userId);
  await deps.pgPool
    .query(`SELECT pg_notify('holdpoint_changes', $1)`, [JSON.stringify({ tenantId: null, kind: 'access', userId })])
    .catch((err: Error) => deps.logger.warn({ err: err.message }, 'could not announce a sign-out on the change feed'));
}
