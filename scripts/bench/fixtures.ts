// What each bench run needs from the scale database: ids to ask for, and fresh permits for the
// transition loops (each request moves a different permit once, so every request stays valid).
// The fresh permits are written like the seed writes: with their audit events on the tenant's chain.
import type pg from 'pg';
import { AuditChainWriter } from '../scale/bulk';
import { SCALE_CODE_PREFIX, SCALE_INSTRUMENT_SERIAL, SCALE_TENANT_SLUG } from '../scale/dataset';

export interface Fixtures {
  tenantId: string;
  pipelineId: string;
  pipelineSteps: number;
  liveSteps: number;
  pagePermitIds: string[];
  gasPermitIds: string[];
  ackSteps: { permitId: string; stepId: string }[];
  instrumentId: string | null;
  drafts: string[];
  requested: string[];
}

const first = async <R>(db: pg.Client, sql: string, params: unknown[]) => (await db.query(sql, params)).rows[0] as R | undefined;

export async function loadFixtures(db: pg.Client, counts: { drafts: number; requested: number }): Promise<Fixtures> {
  const tenant = await first<{ id: string }>(db, `SELECT id FROM tenants WHERE slug = $1`, [SCALE_TENANT_SLUG]);
  const seeded = tenant && (await first<{ n: number }>(db, `SELECT count(*)::int AS n FROM pipelines WHERE tenant_id = $1 AND code LIKE $2`, [tenant.id, `${SCALE_CODE_PREFIX}%`]));
  if (!tenant || !seeded?.n) throw new Error('The scale dataset is missing: run `npm run seed:scale` first.');
  const tenantId = tenant.id;
  await db.query(`SELECT set_config('app.tenant_id', $1, false)`, [tenantId]);

  const busiest = (await first<{ pipeline_id: string; n: number }>(
    db,
    `SELECT p.pipeline_id, count(*)::int AS n FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
     WHERE s.tenant_id = $1 AND s.status IN ('applied','verified') GROUP BY p.pipeline_id ORDER BY n DESC, p.pipeline_id LIMIT 1`,
    [tenantId],
  ))!;
  const live = (await first<{ n: number }>(db, `SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = $1 AND status IN ('applied','verified')`, [tenantId]))!;
  const ids = async (sql: string, params: unknown[]) => (await db.query<{ id: string }>(sql, params)).rows.map((r) => r.id);
  // Fixed samples (not random()), so two runs ask for the same permits; the acknowledgements the
  // stream test makes go to isolations the control room has not acknowledged yet, where there are any.
  const pagePermitIds = await ids(`SELECT id FROM permits WHERE tenant_id = $1 ORDER BY md5(id::text) LIMIT 500`, [tenantId]);
  const gasPermitIds = await ids(
    `SELECT p.id FROM permits p JOIN organisations o ON o.tenant_id = p.tenant_id AND o.id = p.contractor_organisation_id
     WHERE p.tenant_id = $1 AND p.state = 'live' AND o.kind = 'contractor' ORDER BY md5(p.id::text) LIMIT 400`,
    [tenantId],
  );
  const ackSteps = (
    await db.query<{ permit_id: string; id: string }>(
      `SELECT s.permit_id, s.id FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
       WHERE s.tenant_id = $1 AND s.status = 'verified' AND p.state = 'live' ORDER BY s.control_room_ack_applied_at IS NOT NULL, md5(s.id::text) LIMIT 10`,
      [tenantId],
    )
  ).rows.map((r) => ({ permitId: r.permit_id, stepId: r.id }));
  // Gas tests need a monitor bump-tested today, before the test.
  const instrument = await first<{ id: string }>(
    db,
    `UPDATE instruments SET last_bump_test_at = now() - interval '1 minute' WHERE tenant_id = $1 AND serial = $2 RETURNING id`,
    [tenantId, SCALE_INSTRUMENT_SERIAL],
  );

  const drafts = await createPermits(db, tenantId, busiest.pipeline_id, counts.drafts, 'draft');
  const requested = await createPermits(db, tenantId, busiest.pipeline_id, counts.requested, 'requested');
  return {
    tenantId, pipelineId: busiest.pipeline_id, pipelineSteps: busiest.n, liveSteps: live.n, pagePermitIds, gasPermitIds, ackSteps,
    instrumentId: instrument?.id ?? null, drafts, requested,
  };
}

/** `n` cold-work permits by the contractor lead, as drafts (version 1) or sent for approval (version 2), with their events. */
async function createPermits(db: pg.Client, tenantId: string, pipelineId: string, n: number, state: 'draft' | 'requested') {
  if (n <= 0) return [];
  const person = async (email: string) => (await first<{ id: string; name: string }>(db, `SELECT id, name FROM users WHERE lower(email) = $1`, [email]))!;
  const lead = await person('lead@oxbow-repair.example');
  const org = (await first<{ id: string }>(db, `SELECT id FROM organisations WHERE tenant_id = $1 AND kind = 'contractor' ORDER BY name LIMIT 1`, [tenantId]))!;
  const line = (await first<{ a: number; b: number }>(db, `SELECT start_position::float8 AS a, end_position::float8 AS b FROM pipelines WHERE id = $1`, [pipelineId]))!;
  await db.query('BEGIN');
  try {
    const head = (await first<{ seq: number; last_hash: string }>(db, `SELECT seq, last_hash FROM audit_chain_heads WHERE tenant_id = $1 FOR UPDATE`, [tenantId])) ?? { seq: 0, last_hash: '' };
    const year = new Date().getUTCFullYear();
    const { last } = (await first<{ last: number }>(
      db,
      `INSERT INTO permit_sequences (tenant_id, year, last) VALUES ($1, $2, $3) ON CONFLICT (tenant_id, year) DO UPDATE SET last = permit_sequences.last + $3 RETURNING last`,
      [tenantId, year, n],
    ))!;
    const rows = (
      await db.query<{ id: string; number: string; title: string; created_at: Date }>(
        `INSERT INTO permits (tenant_id, number, state, version, kinds, title, scope, pipeline_id, from_position, to_position, method_statement, hazards, checklist, walkdown,
           valid_from, valid_to, contractor_organisation_id, contractor_lead_user_id, requester_user_id, created_at, updated_at)
         SELECT $1, format('PW-%s-%s', $2::int, lpad(n::text, greatest(4, length(n::text)), '0')), $5, $6, '{cold_work}', format('Bench %s: recoat a girth weld', g), 'Bench permit.', $7, spot.at, spot.at,
                'Recoat by hand.', 'Residual vapour.',
                coalesce((SELECT jsonb_agg(jsonb_build_object('key', key, 'label', label, 'required', 'all' = ANY (required_for) OR 'cold_work' = ANY (required_for), 'confirmed', false) ORDER BY sort)
                          FROM checklist_templates WHERE tenant_id = $1 AND stage = 'before_work'), '[]'::jsonb),
                coalesce((SELECT jsonb_agg(jsonb_build_object('key', key, 'label', label, 'required', 'all' = ANY (required_for) OR 'cold_work' = ANY (required_for), 'confirmed', false) ORDER BY sort)
                          FROM checklist_templates WHERE tenant_id = $1 AND stage = 'walkdown'), '[]'::jsonb),
                date_trunc('milliseconds', now()), date_trunc('milliseconds', now()) + interval '10 hours', $9, $10, $10, date_trunc('milliseconds', now()), date_trunc('milliseconds', now())
         FROM generate_series(1, $4::int) g, LATERAL (SELECT $3::int - $4::int + g AS n) num,
              -- Spread along the line, as real jobs are: permits stacked on one spot would all overlap each other.
              LATERAL (SELECT round(($8::numeric + ($11::numeric - $8::numeric) * g / ($4::int + 1)), 3) AS at) spot
         RETURNING id, number, title, created_at`,
        [tenantId, year, last, n, state, state === 'draft' ? 1 : 2, pipelineId, line.a.toFixed(3), org.id, lead.id, line.b.toFixed(3)],
      )
    ).rows;
    const chain = new AuditChainWriter(db, tenantId, { seq: Number(head.seq), hash: head.last_hash }, () => undefined);
    const actor = { actor_user_id: lead.id, actor_name: lead.name, actor_role: 'contractor_lead', membership_id: null, reason: null, ip: '127.0.0.1' };
    for (const r of rows) {
      const base = { entity_type: 'permit', entity_id: r.id, permit_id: r.id, ...actor };
      chain.append({ ...base, action: 'created', from_state: null, to_state: 'draft', data: { number: r.number, title: r.title }, occurred_at: r.created_at });
      if (state === 'requested') chain.append({ ...base, action: 'submit', from_state: 'draft', to_state: 'requested', data: {}, occurred_at: r.created_at });
    }
    await chain.finish(db);
    await db.query('COMMIT');
    return rows.map((r) => r.id);
  } catch (err) {
    await db.query('ROLLBACK');
    throw err;
  }
}
