// Helpers for loading the scale dataset quickly: multi-row INSERTs (one statement per ~1,000 rows,
// each column sent as one array parameter and unnested by PostgreSQL), a small progress bar on
// stderr, a seeded random source, and the audit hash chain written in bulk.
import { readFileSync } from 'node:fs';
import type pg from 'pg';
import { eventHash } from '../../server/src/modules/audit/audit.service';

export type AuditEventFields = Parameters<typeof eventHash>[1];

/** A column: its name, the array type its values travel as, and an optional cast applied after unnest. */
export type Column = [name: string, arrayType: string, cast?: string];

const turns = new WeakMap<pg.Client, Promise<unknown>>();

/** Runs `fn` once every statement queued earlier on this connection has finished: one at a time, in order. */
function inTurn<T>(client: pg.Client, fn: () => Promise<T>): Promise<T> {
  const run = (turns.get(client) ?? Promise.resolve()).then(fn);
  turns.set(client, run.catch(() => undefined));
  return run;
}

/**
 * Collects rows for one table and writes them `batchSize` at a time. `add()` queues a full batch
 * without waiting, so row generation in Node overlaps the insert work in PostgreSQL; `room()` holds
 * the generator back when too many batches wait; `done()` waits for every queued write.
 */
export class BulkInsert {
  private cols: unknown[][];
  private pending: Promise<void> = Promise.resolve();
  private inFlight = 0;
  private failed: Error | null = null;
  private readonly parents: BulkInsert[] = [];
  rows = 0;

  constructor(
    private readonly client: pg.Client,
    private readonly table: string,
    private readonly columns: Column[],
    private readonly batchSize = 1_000,
    private readonly onWrite: (n: number) => void = () => undefined,
  ) {
    this.cols = columns.map(() => []);
  }

  add(values: unknown[]) {
    if (this.failed) throw this.failed;
    for (let i = 0; i < this.columns.length; i++) this.cols[i].push(values[i] ?? null);
    if (this.cols[0].length >= this.batchSize) this.flush();
  }

  flush() {
    const n = this.cols[0].length;
    if (!n) return;
    const params = this.cols;
    this.cols = this.columns.map(() => []);
    const names = this.columns.map((c) => c[0]).join(', ');
    const args = this.columns.map((c, i) => `$${i + 1}::${c[1]}`).join(', ');
    const select = this.columns.map((c, i) => (c[2] ? `u.c${i}::${c[2]}` : `u.c${i}`)).join(', ');
    const alias = this.columns.map((_c, i) => `c${i}`).join(', ');
    const sql = `INSERT INTO ${this.table} (${names}) SELECT ${select} FROM unnest(${args}) AS u(${alias})`;
    for (const parent of this.parents) parent.flush();
    this.inFlight++;
    // Queued now, in flush order per connection: a parent table's batch (flushed just above, on the
    // same connection) is in before the rows that point at it.
    const q = inTurn(this.client, () => this.client.query(sql, params)).then(
      () => {
        this.rows += n;
        this.onWrite(n);
      },
      (err: Error) => {
        this.failed ??= new Error(`inserting into ${this.table}: ${err.message}`);
      },
    );
    this.pending = Promise.all([this.pending, q.finally(() => this.inFlight--)]).then(() => undefined);
  }

  /** Rows of this table point at rows of `parents`: their pending rows are sent first (same connection). */
  after(...parents: BulkInsert[]) {
    for (const p of parents) if (p.client !== this.client) throw new Error(`${this.table} and ${p.table} must share a connection`);
    this.parents.push(...parents);
    return this;
  }

  /** Waits while more than `max` batches are queued, so generation never runs far ahead of the database. */
  async room(max = 3) {
    while (this.inFlight > max) await new Promise((r) => setTimeout(r, 2));
    if (this.failed) throw this.failed;
  }

  async done() {
    this.flush();
    await this.pending;
    if (this.failed) throw this.failed;
  }
}

/** Mulberry32: a small, fast, seeded generator, so two runs build the same dataset. */
export function randomSource(seed: number) {
  let a = seed >>> 0;
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const hex = (n: number) => Math.floor(next() * 2 ** 32).toString(16).padStart(8, '0').slice(0, n);
  return {
    next,
    int: (min: number, max: number) => min + Math.floor(next() * (max - min + 1)),
    pick: <T>(items: readonly T[]): T => items[Math.floor(next() * items.length)],
    chance: (p: number) => next() < p,
    /** A version-4 shaped UUID from the seeded source. */
    uuid: () => {
      const a1 = hex(8);
      const b = hex(4);
      const c = `4${hex(3)}`;
      const d = `${'89ab'[Math.floor(next() * 4)]}${hex(3)}`;
      const e = `${hex(8)}${hex(4)}`;
      return `${a1}-${b}-${c}-${d}-${e}`;
    },
  };
}
export type Random = ReturnType<typeof randomSource>;

/** A plain progress bar on stderr: redrawn in place on a terminal, one line per phase otherwise. */
export class Progress {
  private done = 0;
  private last = 0;
  private readonly started = Date.now();
  private phase = '';
  private readonly tty: boolean;

  constructor(
    private readonly total: number,
    private readonly enabled = true,
  ) {
    this.tty = enabled && Boolean(process.stderr.isTTY);
  }

  setPhase(name: string) {
    if (this.enabled && this.phase && !this.tty) process.stderr.write(`[seed:scale] ${this.phase} done (${this.elapsed()})\n`);
    this.phase = name;
    this.draw(true);
  }

  tick(n: number) {
    this.done += n;
    this.draw(false);
  }

  finish() {
    this.done = this.total;
    this.draw(true);
    if (this.enabled) process.stderr.write(this.tty ? '\n' : `[seed:scale] ${this.phase} done (${this.elapsed()})\n`);
  }

  private elapsed() {
    return `${((Date.now() - this.started) / 1000).toFixed(1)} s`;
  }

  private draw(force: boolean) {
    if (!this.tty) return;
    const now = Date.now();
    if (!force && now - this.last < 150) return;
    this.last = now;
    const share = Math.min(1, this.done / this.total);
    const width = 30;
    const filled = Math.round(share * width);
    const bar = `${'#'.repeat(filled)}${'-'.repeat(width - filled)}`;
    process.stderr.write(`\r[${bar}] ${(share * 100).toFixed(0).padStart(3)}%  ${this.done.toLocaleString('en-US')} rows  ${this.elapsed()}  ${this.phase.padEnd(28)}`);
  }
}

export interface ChainHead {
  seq: number;
  hash: string;
}

/**
 * Appends events to a tenant's hash chain, in the order given, exactly as appendAudit would one by
 * one: each event's prev_hash is the hash before it, and the head moves with it. The caller writes
 * the final head to audit_chain_heads once every event is in.
 */
export class AuditChainWriter {
  readonly insert: BulkInsert;

  constructor(
    client: pg.Client,
    private readonly tenantId: string,
    readonly head: ChainHead,
    onWrite: (n: number) => void,
  ) {
    this.insert = new BulkInsert(
      client,
      'audit_events',
      [
        ['tenant_id', 'uuid[]'], ['seq', 'bigint[]'], ['entity_type', 'text[]'], ['entity_id', 'uuid[]'], ['permit_id', 'uuid[]'], ['action', 'text[]'],
        ['from_state', 'text[]'], ['to_state', 'text[]'], ['actor_user_id', 'uuid[]'], ['actor_name', 'text[]'], ['actor_role', 'text[]'],
        ['membership_id', 'uuid[]'], ['reason', 'text[]'], ['ip', 'text[]'], ['data', 'text[]', 'jsonb'], ['occurred_at', 'timestamptz[]'],
        ['prev_hash', 'text[]'], ['hash', 'text[]'],
      ],
      1_000,
      onWrite,
    );
  }

  append(e: Omit<AuditEventFields, 'seq' | 'tenant_id'>) {
    const event: AuditEventFields = { ...e, tenant_id: this.tenantId, seq: this.head.seq + 1 };
    const hash = eventHash(this.head.hash, event);
    this.insert.add([
      event.tenant_id, event.seq, event.entity_type, event.entity_id, event.permit_id, event.action, event.from_state, event.to_state,
      event.actor_user_id, event.actor_name, event.actor_role, event.membership_id, event.reason, event.ip, JSON.stringify(event.data),
      new Date(event.occurred_at).toISOString(), this.head.hash, hash,
    ]);
    this.head.seq = event.seq;
    this.head.hash = hash;
  }

  /** Waits for every event, then moves the chain head (the row appendAudit locks) to the last one. */
  async finish(client: pg.Client) {
    await this.insert.done();
    await client.query(
      `INSERT INTO audit_chain_heads (tenant_id, seq, last_hash) VALUES ($1, $2, $3)
       ON CONFLICT (tenant_id) DO UPDATE SET seq = EXCLUDED.seq, last_hash = EXCLUDED.last_hash`,
      [this.tenantId, this.head.seq, this.head.hash],
    );
  }
}

/**
 * Drops the plain (non-unique) indexes of `tables` and returns a function that builds them again
 * from their own definitions: one sorted build after the load costs far less than keeping them up
 * to date row by row. Unique indexes and keys stay, so every constraint is checked during the load.
 */
export async function deferIndexes(client: pg.Client, tables: string[]) {
  const { rows } = await client.query<{ name: string; def: string }>(
    `SELECT i.indexrelid::regclass::text AS name, pg_get_indexdef(i.indexrelid) AS def
     FROM pg_index i JOIN pg_class t ON t.oid = i.indrelid
     WHERE t.relname = ANY ($1) AND t.relnamespace = 'public'::regnamespace AND NOT i.indisunique AND NOT i.indisprimary`,
    [tables],
  );
  for (const r of rows) await client.query(`DROP INDEX ${r.name}`);
  return async () => {
    await client.query(`SET maintenance_work_mem = '256MB'`);
    for (const r of rows) await client.query(r.def);
  };
}

/**
 * Drops the foreign keys of `tables` and returns a function that adds them again from their own
 * definitions. Each row inserted under a foreign key runs a look-up of the row it names, with a
 * share lock on it (every audit event and reading locks the tenant's row once more); adding the key
 * after the load checks every row once, in one join. A row that breaks a key still fails the load,
 * at that point instead of at its insert.
 */
export async function deferForeignKeys(client: pg.Client, tables: string[]) {
  const { rows } = await client.query<{ tbl: string; name: string; def: string }>(
    `SELECT c.conrelid::regclass::text AS tbl, c.conname AS name, pg_get_constraintdef(c.oid) AS def
     FROM pg_constraint c JOIN pg_class t ON t.oid = c.conrelid
     WHERE c.contype = 'f' AND t.relname = ANY ($1) AND t.relnamespace = 'public'::regnamespace`,
    [tables],
  );
  for (const r of rows) await client.query(`ALTER TABLE ${r.tbl} DROP CONSTRAINT ${quoteIdent(r.name)}`);
  return async () => {
    for (const r of rows) await client.query(`ALTER TABLE ${r.tbl} ADD CONSTRAINT ${quoteIdent(r.name)} ${r.def}`);
  };
}

const quoteIdent = (name: string) => `"${name.replace(/"/g, '""')}"`;

/** CPU seconds a PostgreSQL backend has used so far (its user and system time), read from /proc; null where that cannot be read. */
export async function backendCpuSeconds(client: pg.Client): Promise<number | null> {
  const { rows } = await client.query<{ pid: number }>(`SELECT pg_backend_pid() AS pid`);
  try {
    // /proc/<pid>/stat: utime and stime (fields 14 and 15) in clock ticks of 1/100 s.
    const fields = readFileSync(`/proc/${rows[0].pid}/stat`, 'utf8').split(') ')[1].split(' ');
    return (Number(fields[11]) + Number(fields[12])) / 100;
  } catch {
    return null;
  }
}
