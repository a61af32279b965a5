import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { randomBytes } from 'node:crypto';
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import { inject } from 'vitest';
import { createTestDatabase } from '../fixtures/test-server';
import { createSequelize } from '../../server/src/db/sequelize';
import { seedDemo } from '../../server/src/demo';
import { verifyChain } from '../../server/src/modules/audit/audit.service';
// @ts-expect-error plain ESM helper shared with the npm scripts
import { dumpDatabase, restoreDatabase } from '../../scripts/lib/backup.mjs';

const tables = ['tenants', 'users', 'memberships', 'pipelines', 'isolation_points', 'locks', 'permits', 'isolation_steps', 'gas_tests', 'audit_events', 'permit_signatures'];

async function counts(url: string) {
  const c = new pg.Client({ connectionString: url });
  await c.connect();
  const out: Record<string, number> = {};
  for (const t of tables) out[t] = Number((await c.query(`SELECT count(*) AS n FROM ${t}`)).rows[0].n);
  await c.end();
  return out;
}

describe('backup and restore (the npm run db:backup / db:restore helpers)', () => {
  let source: Awaited<ReturnType<typeof createTestDatabase>>;
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-backup-'));
  const target = `t_restore_${randomBytes(4).toString('hex')}`;
  let targetUrl = '';

  beforeAll(async () => {
    source = await createTestDatabase();
    const s = createSequelize(source.url);
    await seedDemo(s, { permits: true });
    await s.close();
    const admin = new pg.Client({ connectionString: inject('dbAdminUrl') });
    await admin.connect();
    await admin.query(`CREATE DATABASE ${target}`);
    await admin.end();
    targetUrl = source.url.replace(/\/[^/]+$/, `/${target}`);
  }, 180_000);

  afterAll(async () => {
    await source.drop();
    const admin = new pg.Client({ connectionString: inject('dbAdminUrl') });
    await admin.connect();
    await admin.query(`DROP DATABASE IF EXISTS ${target} WITH (FORCE)`);
    await admin.end();
    rmSync(dir, { recursive: true, force: true });
  });

  it('when the demo database is dumped and restored into an empty one, then every count matches and the audit chain verifies', async () => {
    const file = join(dir, 'demo.dump');
    dumpDatabase(source.url, file);
    expect(statSync(file).size).toBeGreaterThan(10_000);
    restoreDatabase(targetUrl, file);
    const before = await counts(source.url);
    const after = await counts(targetUrl);
    console.log('rows compared after restore:', JSON.stringify(after));
    expect(after).toEqual(before);
    expect(after.permits).toBeGreaterThanOrEqual(6);
    const restored = createSequelize(targetUrl);
    const tenants = await restored.query<{ id: string }>(`SELECT id FROM tenants`, { type: QueryTypes.SELECT });
    for (const t of tenants) expect(await verifyChain(restored, t.id)).toMatchObject({ ok: true });
    await restored.close();
  });
});
