import { gzip } from 'node:zlib';
import { promisify } from 'node:util';
import { createHash } from 'node:crypto';
import { QueryTypes } from 'sequelize';
import type { Request, Response } from 'express';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import type { BoardQuery } from '@shared/schemas/isolation.schema';
import { boardItemsJson } from './board.service';

const gzipAsync = promisify(gzip);

/**
 * A board answer is reused while nothing in the tenant has changed and it is younger than this. Every
 * change to tenant data appends to the tenant's audit chain in its own transaction, so the chain's
 * sequence number is the version of the data; the age limit bounds what no event marks: the passing of
 * time ("gas test due now") and edits outside the services.
 */
export const BOARD_REUSE_MS = 5_000;
/**
 * The data version an answer was built from: the tenant's audit sequence number and the period of
 * BOARD_REUSE_MS it falls in (periods counted from the epoch, so every process agrees on them).
 * The ETag is made from it and the filter alone, so every server process gives the same ETag for
 * the same data and answers 304 to a screen that got its board from another process.
 */
const periodOf = (ms: number) => Math.floor(ms / BOARD_REUSE_MS);
const boardEtag = (key: string, seq: number, atMs: number) => `W/"${createHash('sha1').update(`${key}|${seq}|${periodOf(atMs)}`).digest('base64url').slice(0, 22)}"`;
const cacheKey = (tenantId: string, q: BoardQuery) => `${tenantId}|${q.pipelineId ?? ''}|${q.permitState ?? ''}|${q.unacknowledged === 'true' ? 'unacknowledged' : ''}`;

/** Answers kept per process, by their size; the full board of a large tenant is a few megabytes. */
const MAX_CACHED_BYTES = 48 * 1024 * 1024;

export interface BoardSnapshot {
  seq: number;
  at: number;
  body: Buffer;
  etag: string;
  gzipped: Promise<Buffer> | null;
}

class BoardCache {
  private readonly entries = new Map<string, BoardSnapshot>();
  private readonly building = new Map<string, Promise<BoardSnapshot>>();
  private bytes = 0;

  constructor(private readonly deps: AppDeps) {}

  async get(tenantId: string, q: BoardQuery): Promise<BoardSnapshot> {
    const { sequelize, clock } = this.deps;
    const key = cacheKey(tenantId, q);
    const seq = await withTenant(sequelize, tenantId, async () => {
      const [head] = await sequelize.query<{ seq: number }>(`SELECT seq FROM audit_chain_heads WHERE tenant_id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT });
      return Number(head?.seq ?? 0);
    });
    const now = clock.now().getTime();
    const hit = this.entries.get(key);
    if (hit && hit.seq === seq && periodOf(now) === periodOf(hit.at)) return hit;
    // Screens refetch together after a change: one query answers all of them.
    const buildKey = `${key}|${seq}`;
    let pending = this.building.get(buildKey);
    if (!pending) {
      pending = this.build(tenantId, q, seq).then((snap) => {
        this.store(key, snap);
        return snap;
      });
      this.building.set(buildKey, pending);
      const forget = () => this.building.delete(buildKey);
      pending.then(forget, forget);
    }
    return pending;
  }

  private async build(tenantId: string, q: BoardQuery, seq: number): Promise<BoardSnapshot> {
    const now = this.deps.clock.now();
    const { json, total } = await withTenant(this.deps.sequelize, tenantId, () => boardItemsJson(this.deps.sequelize, tenantId, q, now));
    const body = Buffer.from(`{"items":${json},"total":${total},"generatedAt":"${now.toISOString()}"}`);
    const etag = boardEtag(cacheKey(tenantId, q), seq, now.getTime());
    return { seq, at: now.getTime(), body, etag, gzipped: null };
  }

  private store(key: string, snap: BoardSnapshot) {
    const old = this.entries.get(key);
    if (old) {
      this.bytes -= old.body.length;
      this.entries.delete(key);
    }
    this.entries.set(key, snap);
    this.bytes += snap.body.length;
    // Oldest first (a Map keeps insertion order).
    for (const [k, e] of this.entries) {
      if (this.bytes <= MAX_CACHED_BYTES || k === key) break;
      this.entries.delete(k);
      this.bytes -= e.body.length;
    }
  }
}

const caches = new WeakMap<AppDeps, BoardCache>();

/** The board as JSON bytes: reused per tenant and filter while the tenant's data is unchanged (see BOARD_REUSE_MS). */
export async function boardSnapshot(deps: AppDeps, tenantId: string, q: BoardQuery): Promise<BoardSnapshot> {
  if (deps.config.BOARD_CACHE === 'off') {
    const now = deps.clock.now();
    const { json, total } = await withTenant(deps.sequelize, tenantId, () => boardItemsJson(deps.sequelize, tenantId, q, now));
    return { seq: 0, at: now.getTime(), body: Buffer.from(`{"items":${json},"total":${total},"generatedAt":"${now.toISOString()}"}`), etag: '', gzipped: null };
  }
  let cache = caches.get(deps);
  if (!cache) {
    cache = new BoardCache(deps);
    caches.set(deps, cache);
  }
  return cache.get(tenantId, q);
}

/**
 * Sends a snapshot: 304 when the screen already has it, gzip when the browser takes it (compressed
 * once per snapshot, off the event loop), the bytes as they are otherwise.
 */
export async function sendBoardSnapshot(req: Request, res: Response, snap: BoardSnapshot) {
  res.type('application/json');
  if (snap.etag) {
    res.setHeader('ETag', snap.etag);
    res.setHeader('Cache-Control', 'private, no-cache');
    res.setHeader('Vary', 'Accept-Encoding');
    if (req.fresh) {
      res.status(304).end();
      return;
    }
    if (snap.body.length > 1024 && req.acceptsEncodings('gzip', 'identity') === 'gzip') {
      snap.gzipped ??= gzipAsync(snap.body).catch((err: Error) => {
        snap.gzipped = null;
        throw err;
      });
      const zipped = await snap.gzipped;
      res.setHeader('Content-Encoding', 'gzip');
      res.send(zipped);
      return;
    }
  }
  res.send(snap.body);
}
