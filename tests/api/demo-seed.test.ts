import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { createTestDatabase } from '../fixtures/test-server';
import { createSequelize } from '../../server/src/db/sequelize';
import { seedDemo } from '../../server/src/demo';
import { verifyChain } from '../../server/src/modules/audit/audit.service';

describe('the demo scenario that npm start seeds', () => {
  let db: Awaited<ReturnType<typeof createTestDatabase>>;
  let sequelize: ReturnType<typeof createSequelize>;
  let seededBy = 0;
  const states = async () =>
    sequelize.query<{ job_reference: string; state: string }>(`SELECT job_reference, state FROM permits WHERE job_reference LIKE 'BM-DEMO-%' ORDER BY job_reference`, { type: QueryTypes.SELECT });

  beforeAll(async () => {
    db = await createTestDatabase();
    sequelize = createSequelize(db.url);
    await seedDemo(sequelize, { permits: true });
    seededBy = Date.now();
  }, 120_000);
  afterAll(async () => {
    await sequelize.close();
    await db.drop();
  });

  it('when seeded, then Bramblecote has one permit at every stage of the job (and one relying on another’s isolation certificate)', async () => {
    const byRef = Object.fromEntries((await states()).map((r) => [r.job_reference, r.state]));
    expect(byRef).toEqual({
      'BM-DEMO-0411': 'returned_to_service',
      'BM-DEMO-1730': 'live',
      'BM-DEMO-1260': 'isolated',
      'BM-DEMO-0820': 'suspended',
      'BM-DEMO-3100': 'approved',
      'BM-DEMO-2530': 'requested',
      'BM-DEMO-1840': 'requested',
    });
  });

  it('when seeded, then the live cut-out holds both valves, drains, vents and two as-built plugs, and CR-BV-149 is shared', async () => {
    const steps = await sequelize.query<{ label: string; status: string; kind: string }>(
      `SELECT coalesce(ip.tag_code, s.temp_label) AS label, s.status, s.kind FROM isolation_steps s JOIN permits p ON p.id = s.permit_id
       LEFT JOIN isolation_points ip ON ip.id = s.point_id WHERE p.job_reference = 'BM-DEMO-1730' ORDER BY s.seq`,
      { type: QueryTypes.SELECT },
    );
    expect(steps.every((s) => s.status === 'verified')).toBe(true);
    expect(steps.map((s) => s.label)).toEqual(expect.arrayContaining(['CR-BV-149', 'CR-BV-197', 'CR-DR-151', 'CR-DR-195', 'CR-VT-150', 'CR-VT-196']));
    expect(steps.filter((s) => s.kind === 'plug')).toHaveLength(2);
    const [shared] = await sequelize.query<{ n: number }>(
      `SELECT count(DISTINCT s.permit_id)::int AS n FROM isolation_steps s JOIN isolation_points ip ON ip.id = s.point_id WHERE ip.tag_code = 'CR-BV-149' AND s.status IN ('applied','verified')`,
      { type: QueryTypes.SELECT },
    );
    expect(shared.n).toBe(2);
  });

  // HSE HSG253 and HSG250: no demo permit is isolated or beyond without its section proved dead and the authoriser's signature.
  it('finding J7: when seeded, then every demo permit that reached Isolated has its section proved dead and the isolations-in-place signature', async () => {
    const rows = await sequelize.query<{ job_reference: string; proved: boolean; signed: boolean }>(
      `SELECT p.job_reference,
              EXISTS (SELECT 1 FROM isolation_provings x WHERE x.tenant_id = p.tenant_id AND x.permit_id = p.id AND x.result = 'proved') AS proved,
              EXISTS (SELECT 1 FROM permit_signatures s WHERE s.tenant_id = p.tenant_id AND s.permit_id = p.id AND s.event = 'confirm_isolated' AND s.password_confirmed) AS signed
       FROM permits p WHERE p.job_reference LIKE 'BM-DEMO-%'
         AND EXISTS (SELECT 1 FROM audit_events a WHERE a.tenant_id = p.tenant_id AND a.permit_id = p.id AND a.to_state = 'isolated')
       ORDER BY p.job_reference`,
      { type: QueryTypes.SELECT },
    );
    expect(rows).toEqual(['BM-DEMO-0411', 'BM-DEMO-0820', 'BM-DEMO-1260', 'BM-DEMO-1730'].map((job_reference) => ({ job_reference, proved: true, signed: true })));
  });

  // HSE HSG253, HSG250 (common practice): a certificate two permits work under, and a long-term isolation with its re-check due.
  it('when seeded, then one isolation certificate is shared by two permits and one long-term isolation has a re-check due', async () => {
    const shared = await sequelize.query<{ permits: string[] }>(
      `SELECT array_agg(p.job_reference ORDER BY p.job_reference) AS permits FROM certificate_permits cp JOIN permits p ON p.id = cp.permit_id
       JOIN isolation_certificates c ON c.id = cp.certificate_id WHERE c.state = 'live' AND cp.released_at IS NULL GROUP BY c.id HAVING count(*) > 1`,
      { type: QueryTypes.SELECT },
    );
    expect(shared.map((r) => r.permits)).toEqual([['BM-DEMO-1730', 'BM-DEMO-1840']]);
    const longTerm = await sequelize.query<{ job_reference: string; due: Date }>(
      `SELECT p.job_reference, c.next_recheck_due AS due FROM isolation_certificates c JOIN permits p ON p.id = c.issued_for_permit_id WHERE c.long_term AND c.state = 'live'`,
      { type: QueryTypes.SELECT },
    );
    expect(longTerm.map((r) => r.job_reference)).toEqual(['BM-DEMO-1260']);
    expect(new Date(longTerm[0].due).getTime()).toBeGreaterThan(Date.now());
  });

  // The stop-work rule (shared/permit/stop-work.ts) suspends live hot work whose repeat gas test is overdue on the scheduler's first tick.
  it('issue 16: when seeded, then the live permit’s next gas test is due in about ten minutes (not overdue) and the suspended one has a failing reading', async () => {
    const [live] = await sequelize.query<{ last: Date; interval: number }>(
      `SELECT max(g.tested_at) AS last, p.gas_test_interval_minutes AS interval FROM gas_tests g JOIN permits p ON p.id = g.permit_id
       WHERE p.job_reference = 'BM-DEMO-1730' AND g.verdict = 'pass' GROUP BY p.gas_test_interval_minutes`,
      { type: QueryTypes.SELECT },
    );
    const dueInMinutes = (new Date(live.last).getTime() + live.interval * 60_000 - Date.now()) / 60_000;
    expect(dueInMinutes).toBeGreaterThan(5);
    expect(dueInMinutes).toBeLessThanOrEqual(10);
    const fails = await sequelize.query(`SELECT 1 FROM gas_tests g JOIN permits p ON p.id = g.permit_id WHERE p.job_reference = 'BM-DEMO-0820' AND g.verdict = 'fail'`, { type: QueryTypes.SELECT });
    expect(fails).toHaveLength(1);
  });

  // OSHA 29 CFR 1910.147(f)(3)(ii)(D): group lockout per person is a per-tenant setting, shown at Harlow Ridge, not at Bramblecote.
  it('issue 16: when seeded, then Harlow Ridge locks per person and a crew of three, each lockout qualified, is signed on to the isolated permit’s lockbox', async () => {
    const tenants = await sequelize.query<{ slug: string; mode: string | null }>(`SELECT slug, settings->>'groupLockout' AS mode FROM tenants ORDER BY slug`, { type: QueryTypes.SELECT });
    expect(tenants).toEqual([
      { slug: 'bramblecote', mode: null },
      { slug: 'harlowridge', mode: 'per_person' },
    ]);
    const crew = await sequelize.query<{ job_reference: string; state: string; name: string; lock: string; qualified: boolean }>(
      `SELECT p.job_reference, p.state, u.name, c.personal_lock_number AS lock,
              EXISTS (SELECT 1 FROM qualifications q WHERE q.tenant_id = c.tenant_id AND q.user_id = c.user_id AND q.kind = 'lockout_tagout' AND q.expires_on > now()) AS qualified
       FROM permit_crew_members c JOIN permits p ON p.id = c.permit_id JOIN users u ON u.id = c.user_id JOIN tenants t ON t.id = c.tenant_id
       WHERE t.slug = 'harlowridge' AND c.signed_off_at IS NULL ORDER BY c.signed_on_at`,
      { type: QueryTypes.SELECT },
    );
    expect(crew).toEqual([
      { job_reference: 'HR-DEMO-1210', state: 'isolated', name: 'Tomas Reyburn', lock: 'PL-HR-01', qualified: true },
      { job_reference: 'HR-DEMO-1210', state: 'isolated', name: 'Ines Calloway', lock: 'PL-HR-02', qualified: true },
      { job_reference: 'HR-DEMO-1210', state: 'isolated', name: 'Bea Morrow', lock: 'PL-HR-03', qualified: true },
    ]);
    const signedOn = await sequelize.query(`SELECT 1 FROM audit_events a JOIN permits p ON p.id = a.permit_id WHERE p.job_reference = 'HR-DEMO-1210' AND a.action = 'crew_signed_on'`, { type: QueryTypes.SELECT });
    expect(signedOn).toHaveLength(3);
  });

  // Planned moments (a validity window, an expiry, a due date, a retry) may lie ahead; what happened may not.
  const plannedColumns = ['valid_from', 'valid_to', 'expires_on', 'expires_at', 'calibration_due_on', 'due_at', 'next_attempt_at', 'expire', 'next_recheck_due', 'recheck_alerted_due'];
  it('issue 17: when seeded, then no recorded moment of any seeded tenant lies after the seed ran', async () => {
    const columns = await sequelize.query<{ table_name: string; column_name: string }>(
      `SELECT c.table_name, c.column_name FROM information_schema.columns c
       JOIN information_schema.tables t ON t.table_schema = c.table_schema AND t.table_name = c.table_name AND t.table_type = 'BASE TABLE'
       WHERE c.table_schema = 'public' AND c.data_type IN ('timestamp with time zone', 'timestamp without time zone', 'date')
         AND EXISTS (SELECT 1 FROM information_schema.columns k WHERE k.table_schema = 'public' AND k.table_name = c.table_name AND k.column_name = 'tenant_id')
         AND c.column_name NOT IN (:planned)
       ORDER BY 1, 2`,
      { replacements: { planned: plannedColumns }, type: QueryTypes.SELECT },
    );
    expect(columns.length).toBeGreaterThan(20);
    const future: string[] = [];
    for (const { table_name, column_name } of columns) {
      const [row] = await sequelize.query<{ n: number; latest: Date | null }>(
        `SELECT count(*)::int AS n, max("${column_name}")::timestamptz AS latest FROM "${table_name}" WHERE "${column_name}" > :by`,
        { replacements: { by: new Date(seededBy) }, type: QueryTypes.SELECT },
      );
      if (row.n) future.push(`${table_name}.${column_name}: ${row.n} rows, latest ${new Date(row.latest!).toISOString()}`);
    }
    expect(future).toEqual([]);
  });

  it('when seeded twice, then nothing is duplicated and the audit chain still verifies', async () => {
    const before = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events`, { type: QueryTypes.SELECT });
    await seedDemo(sequelize, { permits: true });
    const after = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events`, { type: QueryTypes.SELECT });
    expect(after[0].n).toBe(before[0].n);
    expect(await states()).toHaveLength(7);
    const [tenant] = await sequelize.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'bramblecote'`, { type: QueryTypes.SELECT });
    expect(await verifyChain(sequelize, tenant.id)).toMatchObject({ ok: true });
    const [harlow] = await sequelize.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'harlowridge'`, { type: QueryTypes.SELECT });
    expect(await verifyChain(sequelize, harlow.id)).toMatchObject({ ok: true });
  });
});
