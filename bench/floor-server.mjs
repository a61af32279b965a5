// The floor for `npm run bench`: a bare Express route that answers the live board with the single
// best hand-written query we know, through pg alone: no ORM, no session, no sign-in, no tenant
// transaction. Not part of the product; the bench starts it next to the real server and compares.
//   DATABASE_URL=… TENANT_ID=… PORT=… node bench/floor-server.mjs
import express from 'express';
import pg from 'pg';

const pool = new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 10 });
const tenantId = process.env.TENANT_ID;

// The same rows and JSON shape as GET /api/board, built in one statement: PostgreSQL writes the JSON
// text itself, so Node neither parses rows nor serialises objects.
const sql = `
WITH live AS (
  SELECT s.id, s.permit_id, s.point_id, s.status, s.kind, s.condition, s.lock_id, s.tag_id, s.applied_by, s.applied_at, s.verified_by, s.verified_at,
         s.remotely_operable, s.remote_ack_at, s.control_room_ack_applied_at, s.plug_as_built, s.temp_label, s.temp_position,
         p.number, p.state AS permit_state, p.pipeline_id, p.gas_test_interval_minutes, p.from_position, p.to_position
  FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
  WHERE s.tenant_id = $1 AND s.status IN ('applied','verified') AND ($2::uuid IS NULL OR p.pipeline_id = $2::uuid)
), holders AS (
  SELECT s.point_id, jsonb_agg(DISTINCT jsonb_build_object('id', p.id, 'number', p.number, 'state', p.state)) AS permits
  FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
  WHERE s.tenant_id = $1 AND s.status IN ('applied','verified') AND s.point_id IN (SELECT point_id FROM live WHERE point_id IS NOT NULL)
  GROUP BY s.point_id
), gas AS (
  SELECT g.permit_id, max(g.tested_at) AS last_pass FROM gas_tests g
  WHERE g.tenant_id = $1 AND g.verdict = 'pass' AND g.permit_id IN (SELECT permit_id FROM live) GROUP BY g.permit_id
), rows AS (
  SELECT l.*, pl.name AS pipeline_name, coalesce(ip.tag_code, l.temp_label) AS label, coalesce(ip.position, l.temp_position)::float8 AS pos,
         lk.number AS lock_number, tg.number AS tag_number, ua.name AS applied_by_name, uv.name AS verified_by_name, h.permits, gas.last_pass
  FROM live l
  JOIN pipelines pl ON pl.tenant_id = $1 AND pl.id = l.pipeline_id
  LEFT JOIN isolation_points ip ON ip.tenant_id = $1 AND ip.id = l.point_id
  LEFT JOIN locks lk ON lk.tenant_id = $1 AND lk.id = l.lock_id
  LEFT JOIN tags tg ON tg.tenant_id = $1 AND tg.id = l.tag_id
  LEFT JOIN users ua ON ua.id = l.applied_by
  LEFT JOIN users uv ON uv.id = l.verified_by
  LEFT JOIN holders h ON h.point_id = l.point_id
  LEFT JOIN gas ON gas.permit_id = l.permit_id
)
SELECT count(*)::int AS total, coalesce(json_agg(json_build_object(
  'stepId', id, 'status', status, 'pipelineId', pipeline_id, 'pipelineName', pipeline_name, 'pointId', point_id, 'label', label, 'position', pos,
  'kind', kind, 'condition', condition, 'lockNumber', lock_number, 'tagNumber', tag_number, 'appliedAt', to_char(applied_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
  'appliedByName', applied_by_name, 'verifiedAt', to_char(verified_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'), 'verifiedByName', verified_by_name,
  'remotelyOperable', remotely_operable, 'remoteAckAt', to_char(remote_ack_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
  'controlRoomAckAppliedAt', to_char(control_room_ack_applied_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'), 'plugBuiltAt', plug_as_built->>'builtAt',
  'permit', json_build_object('id', permit_id, 'number', number, 'state', permit_state, 'fromPosition', from_position::float8, 'toPosition', to_position::float8),
  'permits', coalesce(permits, jsonb_build_array(jsonb_build_object('id', permit_id, 'number', number, 'state', permit_state))),
  'nextGasTestDue', CASE WHEN permit_state = 'live' THEN to_char(coalesce(last_pass + make_interval(mins => gas_test_interval_minutes), $3::timestamptz) AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"') END
) ORDER BY pipeline_name, pos, number)::text, '[]') AS items
FROM rows`;

const app = express();
app.get('/board', async (req, res) => {
  const now = new Date();
  const pipelineId = typeof req.query.pipelineId === 'string' ? req.query.pipelineId : null;
  const { rows } = await pool.query(sql, [tenantId, pipelineId, now]);
  res.type('application/json').send(`{"items":${rows[0].items},"total":${rows[0].total},"generatedAt":"${now.toISOString()}"}`);
});
const server = app.listen(Number(process.env.PORT ?? 0), '127.0.0.1', () => {
  console.log(`floor listening on ${server.address().port}`);
});
// The bench stops the floor mid-flight at the end of its runs: nothing to finish.
process.on('SIGTERM', () => process.exit(0));
