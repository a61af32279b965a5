// The live board on a sliver of the scale dataset: the JSON PostgreSQL writes is the board the rows
// make, and a reused answer never hides a change (the tenant's audit sequence versions it).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { gzipSync } from 'node:zlib';
import { buildScaleDataset } from '../../scripts/scale/build-dataset';
import { verifyChain } from '../../server/src/modules/audit/audit.service';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

// The board as the route read it before PostgreSQL wrote the JSON: one row per step, parsed by pg.
const rowByRowBoard = `
WITH live AS (
  SELECT s.*, p.number, p.state AS permit_state, p.pipeline_id, p.gas_test_interval_minutes, p.from_position::float8 AS work_from, p.to_position::float8 AS work_to
  FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
  WHERE s.tenant_id = :tenantId AND s.status IN ('applied','verified')
    AND (CAST(:pipelineId AS uuid) IS NULL OR p.pipeline_id = CAST(:pipelineId AS uuid))
    AND (CAST(:permitState AS text) IS NULL OR p.state = CAST(:permitState AS text))
), holders AS (
  SELECT s.point_id, jsonb_agg(DISTINCT jsonb_build_object('id', p.id, 'number', p.number, 'state', p.state)) AS permits
  FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
  WHERE s.tenant_id = :tenantId AND s.status IN ('applied','verified') AND s.point_id IN (SELECT point_id FROM live WHERE point_id IS NOT NULL)
  GROUP BY s.point_id
), gas AS (
  SELECT g.permit_id, max(g.tested_at) AS last_pass FROM gas_tests g
  WHERE g.tenant_id = :tenantId AND g.verdict = 'pass' AND g.permit_id IN (SELECT DISTINCT permit_id FROM live) GROUP BY g.permit_id
)
SELECT l.id AS "stepId", l.status, l.pipeline_id AS "pipelineId", pl.name AS "pipelineName", l.point_id AS "pointId",
       coalesce(ip.tag_code, l.temp_label) AS label, coalesce(ip.position, l.temp_position)::float8 AS position, l.kind, l.condition,
       lk.number AS "lockNumber", tg.number AS "tagNumber", l.applied_at AS "appliedAt", ua.name AS "appliedByName",
       l.verified_at AS "verifiedAt", uv.name AS "verifiedByName", l.remotely_operable AS "remotelyOperable", l.remote_ack_at AS "remoteAckAt",
       l.control_room_ack_applied_at AS "controlRoomAckAppliedAt", l.plug_as_built->>'builtAt' AS "plugBuiltAt",
       jsonb_build_object('id', l.permit_id, 'number', l.number, 'state', l.permit_state, 'fromPosition', l.work_from, 'toPosition', l.work_to) AS permit,
       coalesce(h.permits, jsonb_build_array(jsonb_build_object('id', l.permit_id, 'number', l.number, 'state', l.permit_state))) AS permits,
       CASE WHEN l.permit_state = 'live' THEN coalesce(gas.last_pass + make_interval(mins => l.gas_test_interval_minutes), CAST(:now AS timestamptz)) END AS "nextGasTestDue"
FROM live l
JOIN pipelines pl ON pl.tenant_id = l.tenant_id AND pl.id = l.pipeline_id
LEFT JOIN isolation_points ip ON ip.tenant_id = l.tenant_id AND ip.id = l.point_id
LEFT JOIN locks lk ON lk.tenant_id = l.tenant_id AND lk.id = l.lock_id
LEFT JOIN tags tg ON tg.tenant_id = l.tenant_id AND tg.id = l.tag_id
LEFT JOIN users ua ON ua.id = l.applied_by
LEFT JOIN users uv ON uv.id = l.verified_by
LEFT JOIN holders h ON h.point_id = l.point_id
LEFT JOIN gas ON gas.permit_id = l.permit_id
ORDER BY pl.name, position, l.number`;

interface Item {
  stepId: string;
  permit: { id: string; state: string };
  permits: unknown[];
  controlRoomAckAppliedAt: string | null;
}

describe('live board on the scale dataset', () => {
  let srv: TestServer;
  let control: ApiClient;
  let other: ApiClient;
  let tenantId = '';

  const reference = async (filters: { pipelineId?: string; permitState?: string }, now: string) =>
    JSON.parse(
      JSON.stringify(
        await srv.deps.sequelize.query(rowByRowBoard, {
          replacements: { tenantId, pipelineId: filters.pipelineId ?? null, permitState: filters.permitState ?? null, now: new Date(now) },
          type: QueryTypes.SELECT,
        }),
      ),
    );
  const board = async (query = '', headers: Record<string, string> = {}) => {
    const req = control.get(`/api/board${query}`);
    for (const [k, v] of Object.entries(headers)) req.set(k, v);
    return req;
  };

  beforeAll(async () => {
    srv = await startTestServer();
    await buildScaleDataset(srv.databaseUrl, { factor: 0.01 });
    tenantId = (await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM tenants WHERE slug = 'bramblecote'`, { type: QueryTypes.SELECT }))[0].id;
    [control, other] = await Promise.all([srv.signIn(users.control), srv.signIn(users.otherTenant)]);
  }, 240_000);
  afterAll(() => srv.close());

  it('when the scale dataset is built, then its audit chain verifies and every isolation in place holds its own lock and tag', async () => {
    const report = await verifyChain(srv.deps.sequelize, tenantId);
    expect(report).toMatchObject({ ok: true });
    expect(report.events).toBeGreaterThan(5_000);
    const [held] = await srv.deps.sequelize.query<{ steps: number; locks: number; tags: number; shared_points: number }>(
      `SELECT count(*)::int AS steps, count(DISTINCT lock_id)::int AS locks, count(DISTINCT tag_id)::int AS tags,
              (SELECT count(*)::int FROM (SELECT point_id FROM isolation_steps WHERE tenant_id = :tenantId AND status IN ('applied','verified') GROUP BY point_id HAVING count(*) > 1) x) AS shared_points
       FROM isolation_steps WHERE tenant_id = :tenantId AND status IN ('applied','verified')`,
      { replacements: { tenantId }, type: QueryTypes.SELECT },
    );
    // 20 live permits × 4 steps at a hundredth of the full size; one permit in twenty shares its points (group lockout).
    expect(held).toEqual({ steps: 80, locks: 80, tags: 80, shared_points: 4 });
  });

  it.each([
    ['the whole tenant', {}],
    ['one pipeline', { pipeline: true }],
    ['suspended permits only', { permitState: 'suspended' }],
  ])('when PostgreSQL writes the board JSON for %s, then it is the board the rows make, field for field and in order', async (_name, f: { pipeline?: boolean; permitState?: string }) => {
    const pipelineId = f.pipeline
      ? (await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM pipelines WHERE tenant_id = :tenantId AND code = 'SC-001'`, { replacements: { tenantId }, type: QueryTypes.SELECT }))[0].id
      : undefined;
    const qs = new URLSearchParams({ ...(pipelineId ? { pipelineId } : {}), ...(f.permitState ? { permitState: f.permitState } : {}) }).toString();
    const res = await board(qs ? `?${qs}` : '');
    expect(res.status).toBe(200);
    expect(res.body.items.length).toBeGreaterThan(0);
    expect(res.body.total).toBe(res.body.items.length);
    expect(res.body.items).toEqual(await reference({ pipelineId, permitState: f.permitState }, res.body.generatedAt));
  });

  it('when nothing changed, then the next screen gets the same answer, and a screen that has it gets 304 Not Modified', async () => {
    const first = await board();
    const second = await board();
    expect(second.body.generatedAt).toBe(first.body.generatedAt);
    expect(second.headers.etag).toBe(first.headers.etag);
    const again = await board('', { 'if-none-match': first.headers.etag });
    expect(again.status).toBe(304);
  });

  it('when the control room acknowledges an isolation, then the very next board shows it (no waiting for the reuse to run out)', async () => {
    const before = (await board()).body.items as Item[];
    const row = before.find((i) => !i.controlRoomAckAppliedAt)!;
    const ack = await control.post(`/api/permits/${row.permit.id}/isolations/${row.stepId}/acknowledge`, { what: 'applied' });
    expect(ack.status, JSON.stringify(ack.body)).toBe(200);
    const after = (await board()).body.items as Item[];
    expect(after.find((i) => i.stepId === row.stepId)!.controlRoomAckAppliedAt).not.toBeNull();
  });

  it('when five seconds pass with no change, then the board is built again for the new time', async () => {
    const first = await board();
    srv.clock.advanceMinutes(0.1);
    const later = await board();
    expect(later.body.generatedAt).not.toBe(first.body.generatedAt);
    expect(later.headers.etag).not.toBe(first.headers.etag);
  });

  it('when a screen takes gzip, then it gets the same board compressed, and a screen that does not gets it plain', async () => {
    const plain = await board('', { 'accept-encoding': 'identity' });
    expect(plain.headers['content-encoding']).toBeUndefined();
    // superagent unzips what it receives: the header says what travelled.
    const zipped = await board('', { 'accept-encoding': 'gzip' });
    expect(zipped.headers['content-encoding']).toBe('gzip');
    expect(zipped.body).toEqual(plain.body);
    expect(gzipSync(JSON.stringify(plain.body)).length).toBeLessThan(JSON.stringify(plain.body).length / 3);
  });

  it("when another tenant's reader asks, then the answer is their own board, never this tenant's", async () => {
    const mine = await board();
    const theirs = await other.get('/api/board');
    expect(theirs.status).toBe(200);
    expect(theirs.headers.etag).not.toBe(mine.headers.etag);
    const ours = new Set((mine.body.items as Item[]).map((i) => i.stepId));
    expect((theirs.body.items as Item[]).some((i) => ours.has(i.stepId))).toBe(false);
  });
});
