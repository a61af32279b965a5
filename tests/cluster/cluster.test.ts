// Issue 20, part 2: the acceptance list against the running cluster (`npm run test:cluster`): HAProxy
// before three Holdpoint processes, PgBouncer in transaction mode, a hot standby for the lag-tolerant
// reads, s3rver for uploads. Requests go through the balancer or straight to one process's port.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn } from 'node:child_process';
import { crc32, deflateSync } from 'node:zlib';
import { randomUUID } from 'node:crypto';
import type pg from 'pg';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { startCluster } from '../../scripts/lib/pg.mjs';
import { backendUrl, clusterState, openStream, ownerDb, SessionCookies, signIn, sleep } from './cluster-fixture';

const TECH = 'tech@oxbow-repair.example';
const AUTHORISER = 'authoriser@bramblecote.example';
const HARLOW = 'authoriser@harlowridge.example';
const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };
/** Gas-test writers under load (each keeps one request in flight). */
const WRITERS = 4;

let db: pg.Client;
let permitId = '';
let instrumentId = '';
const one = async <T>(sql: string, values: unknown[] = []) => (await db.query(sql, values)).rows[0] as T;

beforeAll(async () => {
  db = await ownerDb();
  ({ id: permitId } = await one<{ id: string }>(`SELECT id FROM permits WHERE job_reference = 'BM-DEMO-1730'`));
  ({ id: instrumentId } = await one<{ id: string }>(`SELECT id FROM instruments WHERE serial = 'FG4-20731'`));
  // The monitor is bump-tested today, whenever the cluster was seeded.
  await db.query(`UPDATE instruments SET last_bump_test_at = now() WHERE id = $1`, [instrumentId]);
});

afterAll(async () => {
  await db?.end();
});

/** A gas test; a retry sends the same key with the same body (the same testedAt). */
const gasTest = (s: SessionCookies, base: string, key: string, from: string, testedAt = new Date().toISOString()) =>
  s.send(base, 'POST', `/api/permits/${permitId}/gas-tests`, { instrumentId, place: 'work_area', testedAt, readings: clean }, { 'idempotency-key': key, 'x-forwarded-for': from });

describe('issue 20 part 2: one screen, any process', () => {
  it('when a screen signs in through process 1, then processes 2 and 3 and the balancer know it', async () => {
    const s = await signIn(backendUrl(0), AUTHORISER, '198.51.100.1');
    for (const base of [backendUrl(1), backendUrl(2), clusterState().url]) {
      const me = await s.send(base, 'GET', '/api/auth/me');
      expect(me.status, base).toBe(200);
      expect(((await me.json()) as { user: { email: string } }).user.email).toBe(AUTHORISER);
    }
  });

  it('when a gas test is written through process 1, then a screen streaming from process 3 hears it within 1 s', async () => {
    const tech = await signIn(backendUrl(0), TECH, '198.51.100.2');
    const watcher = await signIn(backendUrl(2), AUTHORISER, '198.51.100.2');
    const stream = openStream(() => backendUrl(2), watcher, permitId);
    await stream.ready();
    const sent = Date.now();
    const res = await gasTest(tech, backendUrl(0), randomUUID(), '198.51.100.2');
    expect(res.status, await res.clone().text()).toBe(201);
    for (const deadline = sent + 1_000; Date.now() < deadline && !stream.events.some((e) => e.event === 'change' && e.at >= sent); ) await sleep(10);
    stream.close();
    const heard = stream.events.find((e) => e.event === 'change' && e.at >= sent);
    expect(heard, 'no change event within 1 s').toBeTruthy();
    expect(heard!.at - sent).toBeLessThan(1_000);
  });

  it('when ten sign-ins from one address fail through processes 1, 2 and 3 in turn, then the eleventh through any of them is refused', async () => {
    const limit = Number(clusterState().env?.SIGN_IN_LIMIT_PER_IP ?? 100);
    const from = '203.0.113.77';
    const attempt = async (i: number) => {
      const s = new SessionCookies();
      const headers = { 'x-forwarded-for': from };
      const base = backendUrl(i % 3);
      s.csrf = ((await (await s.send(base, 'GET', '/api/auth/csrf', undefined, headers)).json()) as { csrfToken: string }).csrfToken;
      // A different unknown account each time, so only the address's count grows.
      return s.send(base, 'POST', '/api/auth/sign-in', { email: `nobody-${i}@example.invalid`, password: 'wrong password' }, headers);
    };
    for (let i = 0; i < limit; i++) expect((await attempt(i)).status, `attempt ${i + 1}`).toBe(401);
    for (const i of [0, 1, 2]) expect((await attempt(limit + i)).status, `through process ${i + 1}`).toBe(429);
  });

  it('when a photo is uploaded through process 1, then it downloads through process 2, and another tenant gets 404', async () => {
    const tech = await signIn(backendUrl(0), TECH, '198.51.100.3');
    const form = new FormData();
    form.append('file', new Blob([new Uint8Array(png())], { type: 'image/png' }), 'valve BV-7 closed.png');
    const up = await tech.send(backendUrl(0), 'POST', `/api/permits/${permitId}/attachments`, form, { 'x-forwarded-for': '198.51.100.3' });
    const body = (await up.json()) as { id: string; downloadUrl: string };
    expect(up.status, JSON.stringify(body)).toBe(201);
    const reader = await signIn(backendUrl(1), AUTHORISER, '198.51.100.3');
    const got = await reader.send(backendUrl(1), 'GET', body.downloadUrl);
    expect(got.status).toBe(200);
    expect(Buffer.from(await got.arrayBuffer()).equals(png())).toBe(true);
    const other = await signIn(backendUrl(2), HARLOW, '198.51.100.3');
    expect((await other.send(backendUrl(2), 'GET', body.downloadUrl)).status).toBe(404);
  });

  it('when the balancer is asked for readiness, then the standby is up and its lag is measured', async () => {
    const ready = (await (await fetch(`${clusterState().url}/api/health/ready`)).json()) as { replica: { state: string; lagBytes: number; lagMs: number } };
    expect(ready.replica.state).toBe('up');
    expect(ready.replica.lagMs).toBeLessThan(2_000);
    expect(typeof ready.replica.lagBytes).toBe('number');
  });
});

describe('issue 20 part 2: the read replica', () => {
  it('when a screen that wrote nothing lately reads the board, the permit list and the audit log, then the standby answers them', async () => {
    const { ownerUrl, ports } = clusterState();
    const standby = new (await import('pg')).default.Client({ connectionString: ownerUrl.replace(`:${ports.primary}/`, `:${ports.standby}/`) });
    await standby.connect();
    const commits = async () => {
      await sleep(1_500); // backends report their counts to the statistics about once a second
      return (await standby.query<{ n: number }>(`SELECT xact_commit::int AS n FROM pg_stat_database WHERE datname = 'holdpoint'`)).rows[0].n;
    };
    try {
      const s = await signIn(backendUrl(0), AUTHORISER, '198.51.100.4');
      // Signing in is a change: for a few seconds this browser reads from the primary.
      await sleep(5_500);
      const before = await commits();
      for (let i = 0; i < 10; i++)
        for (const path of ['/api/board', '/api/permits?page=1&pageSize=20', '/api/audit/events?page=1&pageSize=20']) expect((await s.send(backendUrl(i % 3), 'GET', path)).status).toBe(200);
      expect((await commits()) - before).toBeGreaterThanOrEqual(20);
    } finally {
      await standby.end();
    }
  });
});

describe('issue 20 part 2: load while processes die and the standby stops', () => {
  it('when process 1 is killed and process 2 restarted under gas-test writes and reads, then every acknowledged write is stored once, nothing answers 500, and the screen misses no event', async () => {
    const from = '198.51.100.10';
    const tech = await signIn(backendUrl(0), TECH, from);
    const reader = await signIn(backendUrl(1), AUTHORISER, from);
    const watcher = await signIn(backendUrl(2), AUTHORISER, from);
    const { seq: startSeq } = await one<{ seq: number }>(`SELECT coalesce(max(seq), 0)::int AS seq FROM audit_events WHERE permit_id = $1`, [permitId]);
    const { n: before } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = $1`, [permitId]);
    const stream = openStream(() => clusterState().url, watcher, permitId);
    await stream.ready();

    const url = clusterState().url;
    const statuses = new Map<number, number>();
    const count = (status: number) => statuses.set(status, (statuses.get(status) ?? 0) + 1);
    const acknowledged = new Map<string, string>();
    const keys = new Set<string>();
    const refused: string[] = [];
    const until = Date.now() + 20_000;
    const writer = async () => {
      while (Date.now() < until) {
        const key = randomUUID();
        const testedAt = new Date().toISOString();
        keys.add(key);
        // The same key again until an answer comes: a request cut by a dying process is retried safely.
        for (let attempt = 0; attempt < 50; attempt++) {
          const res = await gasTest(tech, url, key, from, testedAt).catch(() => null);
          if (!res) continue;
          count(res.status);
          if (res.status === 201 || res.status === 200) {
            acknowledged.set(key, ((await res.json()) as { test: { id: string } }).test.id);
            break;
          }
          refused.push(`${res.status} ${(await res.text()).slice(0, 200)}`);
          await sleep(100);
        }
      }
    };
    const readPaths = ['/api/board', '/api/permits?page=1&pageSize=20', '/api/audit/events?page=1&pageSize=20'];
    const readerLoop = async (n: number) => {
      for (let i = n; Date.now() < until; i++) {
        const res = await reader.send(url, 'GET', readPaths[i % readPaths.length], undefined, { 'x-forwarded-for': from }).catch(() => null);
        if (!res) continue;
        count(res.status);
        await res.arrayBuffer();
      }
    };
    const chaos = async () => {
      await sleep(5_000);
      process.kill(clusterState().backends[0].pid, 'SIGKILL');
      await sleep(5_000);
      process.kill(clusterState().backends[1].pid, 'SIGTERM');
    };
    await Promise.all([...Array.from({ length: WRITERS }, writer), readerLoop(0), readerLoop(1), readerLoop(2), readerLoop(3), readerLoop(4), readerLoop(5), chaos()]);
    // Each gas test is in the database once, and every key is answered in the end: a key's answer commits
    // with its write, and a key whose request died with its process is free as soon as PostgreSQL ends that
    // process's transaction, so its retry replays the committed answer or writes the gas test once.
    const unanswered = keys.size - acknowledged.size;
    expect(unanswered, refused.join('\n')).toBe(0);
    const ids = [...acknowledged.values()];
    expect(new Set(ids).size).toBe(ids.length);
    const { n: after } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = $1`, [permitId]);
    expect(after - before).toBe(ids.length);
    const { n: found } = await one<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE id = ANY($1::uuid[])`, [ids]);
    expect(found).toBe(ids.length);
    expect(statuses.get(500) ?? 0, JSON.stringify([...statuses])).toBe(0);
    expect([...statuses.keys()].filter((s) => s >= 500 && s !== 502 && s !== 503), JSON.stringify([...statuses])).toEqual([]);
    // The screen: every event of the permit since it opened, none twice, across its reconnections.
    await sleep(1_500);
    stream.close();
    const { rows } = await db.query<{ seq: number }>(`SELECT seq::int AS seq FROM audit_events WHERE permit_id = $1 AND seq > $2 ORDER BY seq`, [permitId, startSeq]);
    const heard = stream.events.filter((e) => e.event === 'change').map((e) => e.id);
    expect(heard).toEqual(rows.map((r) => r.seq));
    expect(stream.connections).toBeGreaterThan(1);
    console.log(`[load] ${keys.size} gas-test keys, ${acknowledged.size} acknowledged, ${unanswered} never answered; answers ${JSON.stringify(Object.fromEntries(statuses))}; the screen connected ${stream.connections} times and heard ${heard.length} events`);
  }, 90_000);

  it('when the standby is stopped and started under reads, then the reads go to the primary and none fails', async () => {
    const from = '198.51.100.11';
    const url = clusterState().url;
    // Wait until every process is back and ready after the previous test (which killed and restarted some),
    // then sign in: before, the sign-in through process 1 could meet it still starting.
    for (const deadline = Date.now() + 30_000; Date.now() < deadline; await sleep(200)) {
      const ok = await Promise.all([0, 1, 2].map((i) => fetch(`${backendUrl(i)}/api/health/ready`).then((r) => r.ok, () => false)));
      if (ok.every(Boolean)) break;
    }
    const reader = await signIn(backendUrl(0), AUTHORISER, from);
    const { standbyRoot, ports } = clusterState();
    const standby = startCluster({ root: standbyRoot, port: ports.standby });
    const statuses = new Map<number, number>();
    const until = Date.now() + 12_000;
    const paths = ['/api/board', '/api/permits?page=1&pageSize=20', '/api/audit/events?page=1&pageSize=20'];
    const loop = async (n: number) => {
      for (let i = n; Date.now() < until; i++) {
        const res = await reader.send(url, 'GET', paths[i % paths.length], undefined, { 'x-forwarded-for': from });
        statuses.set(res.status, (statuses.get(res.status) ?? 0) + 1);
        await res.arrayBuffer();
      }
    };
    let downSeen = '';
    const chaos = async () => {
      await sleep(2_000);
      await standby.stopServer('fast');
      await sleep(1_500);
      downSeen = ((await (await fetch(`${backendUrl(0)}/api/health/ready`)).json()) as { replica: { state: string } }).replica.state;
      await sleep(2_500);
      await standby.startServer();
    };
    await Promise.all([loop(0), loop(1), loop(2), loop(3), chaos()]);
    expect([...statuses.keys()], JSON.stringify([...statuses])).toEqual([200]);
    expect(downSeen).toBe('down');
    let state = '';
    for (const deadline = Date.now() + 10_000; Date.now() < deadline && state !== 'up'; await sleep(200))
      state = ((await (await fetch(`${backendUrl(0)}/api/health/ready`)).json()) as { replica: { state: string } }).replica.state;
    expect(state).toBe('up');
  }, 60_000);
});

describe('issue 20 part 2: migrations', () => {
  it('when two server processes start at once on an empty database, then the migrations run once', async () => {
    const { ownerUrl, directUrl, serverDir, env, primaryRoot, ports: clusterPorts } = clusterState();
    const name = `holdpoint_fresh_${Date.now()}`;
    const primary = startCluster({ root: primaryRoot, port: clusterPorts.primary });
    primary.psql(`CREATE DATABASE ${name} OWNER holdpoint`);
    const owner = ownerUrl.replace(/\/holdpoint$/, `/${name}`);
    const app = directUrl.replace(/\/holdpoint$/, `/${name}`);
    const start = (port: number) =>
      spawn(process.execPath, [`${serverDir}/index.js`], {
        env: { ...process.env, ...env, NODE_ENV: 'test', PORT: String(port), HOST: '127.0.0.1', DATABASE_URL: app, DATABASE_OWNER_URL: owner, WORKERS: 'off', SESSION_SECRET: 'test-session-secret-0123456789', DATA_DIR: `${clusterState().dir}/fresh-${port}` },
        stdio: ['ignore', 'ignore', 'inherit'],
      });
    const ports = [clusterState().ports.http + 1000, clusterState().ports.http + 1001];
    const children = ports.map(start);
    try {
      for (const port of ports)
        for (const deadline = Date.now() + 60_000; ; await sleep(200)) {
          if (await fetch(`http://127.0.0.1:${port}/api/health/live`).then((r) => r.ok, () => false)) break;
          if (Date.now() > deadline || children.some((c) => c.exitCode !== null)) throw new Error(`the process on ${port} did not start`);
        }
      const fresh = new (await import('pg')).default.Client({ connectionString: owner });
      await fresh.connect();
      const { rows } = await fresh.query<{ name: string; n: number }>(`SELECT name, count(*)::int AS n FROM schema_migrations GROUP BY name`);
      await fresh.end();
      expect(rows.length).toBeGreaterThan(10);
      expect(rows.filter((r) => r.n !== 1)).toEqual([]);
    } finally {
      for (const c of children) c.kill('SIGTERM');
      await Promise.all(children.map((c) => new Promise((r) => (c.exitCode === null ? c.once('exit', r) : r(null)))));
      primary.psql(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
    }
  });
});

/** A real 1×1 PNG (PNG specification, ISO/IEC 15948): signature, IHDR, IDAT, IEND, each chunk with its CRC. */
function png(): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.from([0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0]);
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(Buffer.from([0, 0xc8, 0x32, 0x1e]))), chunk('IEND', Buffer.alloc(0))]);
}
