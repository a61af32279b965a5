import { QueryTypes, type Sequelize } from 'sequelize';
import type { BoardQuery } from '@shared/schemas/isolation.schema';
import type { BoardItem } from '@shared/types/board';
import { liveStates } from '@shared/permit/states';
import { inPlaceStatuses } from '@shared/isolations/step-rules';

// Timestamps written by PostgreSQL exactly as JSON.stringify writes a JS Date (UTC, milliseconds, "Z").
const isoUtc = (col: string) => `to_char(${col} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;

/**
 * Every isolation applied right now in the tenant, one row per applied step, ordered by pipeline and
 * position. `permits` lists every permit holding the same point (group lockout). One query, and
 * PostgreSQL writes the JSON array itself: with thousands of rows, parsing them into objects only to
 * serialise them again was most of the cost of the board in Node.
 * The next gas test is `nextGasTestDue` (shared/permit/due-times.ts) written in SQL, its states passed in:
 * a live permit that has never had a passing gas test is due one now (the clock's now, so tests can move it).
 */
export async function boardItemsJson(sequelize: Sequelize, tenantId: string, q: BoardQuery, now: Date): Promise<{ json: string; total: number }> {
  // Unfiltered, the steps in place are all the holders there are; filtered, the points' other holders are looked up.
  const filtered = Boolean(q.pipelineId || q.permitState || q.unacknowledged === 'true');
  const holdersOfLivePoints = `(SELECT s.point_id, s.permit_id, p.number, p.state AS permit_state
       FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
       WHERE s.tenant_id = :tenantId AND s.status IN (:inPlace) AND s.point_id IN (SELECT point_id FROM live WHERE point_id IS NOT NULL))`;
  const [row] = await sequelize.query<{ json: string; total: number }>(
    `WITH live AS (
       SELECT s.id, s.permit_id, s.point_id, s.status, s.kind, s.condition, s.lock_id, s.tag_id, s.applied_by, s.applied_at, s.verified_by, s.verified_at,
              s.remotely_operable, s.remote_ack_at, s.control_room_ack_applied_at, s.plug_as_built, s.temp_label, s.temp_position,
              p.number, p.state AS permit_state, p.pipeline_id, p.gas_test_interval_minutes, p.from_position::float8 AS work_from, p.to_position::float8 AS work_to
       FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
       WHERE s.tenant_id = :tenantId AND s.status IN (:inPlace)
         AND (CAST(:pipelineId AS uuid) IS NULL OR p.pipeline_id = CAST(:pipelineId AS uuid))
         AND (CAST(:permitState AS text) IS NULL OR p.state = CAST(:permitState AS text))
         AND (NOT CAST(:unacknowledged AS boolean) OR s.control_room_ack_applied_at IS NULL OR (s.remotely_operable AND s.remote_ack_at IS NULL))
     ), holders AS (
       -- Every permit holding the point, whatever the filters: a filtered board must not hide a group lockout.
       SELECT h.point_id, jsonb_agg(DISTINCT jsonb_build_object('id', h.permit_id, 'number', h.number, 'state', h.permit_state)) AS permits
       FROM ${filtered ? holdersOfLivePoints : 'live'} h WHERE h.point_id IS NOT NULL
       GROUP BY h.point_id
     ), gas AS (
       -- The latest passing test of each permit: one probe of gas_tests_last_pass_idx per permit.
       SELECT lp.permit_id, (SELECT g.tested_at FROM gas_tests g WHERE g.tenant_id = :tenantId AND g.permit_id = lp.permit_id AND g.verdict = 'pass'
                             ORDER BY g.tested_at DESC LIMIT 1) AS last_pass
       FROM (SELECT DISTINCT permit_id FROM live) lp
     ), rows AS (
       SELECT l.*, pl.name AS pipeline_name, coalesce(ip.tag_code, l.temp_label) AS label, coalesce(ip.position, l.temp_position)::float8 AS pos,
              lk.number AS lock_number, tg.number AS tag_number, ua.name AS applied_by_name, uv.name AS verified_by_name, h.permits AS holders, gas.last_pass
       FROM live l
       JOIN pipelines pl ON pl.tenant_id = :tenantId AND pl.id = l.pipeline_id
       LEFT JOIN isolation_points ip ON ip.tenant_id = :tenantId AND ip.id = l.point_id
       LEFT JOIN locks lk ON lk.tenant_id = :tenantId AND lk.id = l.lock_id
       LEFT JOIN tags tg ON tg.tenant_id = :tenantId AND tg.id = l.tag_id
       LEFT JOIN users ua ON ua.id = l.applied_by
       LEFT JOIN users uv ON uv.id = l.verified_by
       LEFT JOIN holders h ON h.point_id = l.point_id
       LEFT JOIN gas ON gas.permit_id = l.permit_id
     )
     SELECT count(*)::int AS total, coalesce(json_agg(json_build_object(
              'stepId', id, 'status', status, 'pipelineId', pipeline_id, 'pipelineName', pipeline_name, 'pointId', point_id, 'label', label,
              'position', pos, 'kind', kind, 'condition', condition, 'lockNumber', lock_number, 'tagNumber', tag_number,
              'appliedAt', ${isoUtc('applied_at')}, 'appliedByName', applied_by_name, 'verifiedAt', ${isoUtc('verified_at')}, 'verifiedByName', verified_by_name,
              'remotelyOperable', remotely_operable, 'remoteAckAt', ${isoUtc('remote_ack_at')}, 'controlRoomAckAppliedAt', ${isoUtc('control_room_ack_applied_at')},
              'plugBuiltAt', plug_as_built->>'builtAt',
              'permit', jsonb_build_object('id', permit_id, 'number', number, 'state', permit_state, 'fromPosition', work_from, 'toPosition', work_to),
              'permits', coalesce(holders, jsonb_build_array(jsonb_build_object('id', permit_id, 'number', number, 'state', permit_state))),
              'nextGasTestDue', CASE WHEN permit_state IN (:live)
                THEN ${isoUtc('coalesce(last_pass + make_interval(mins => gas_test_interval_minutes), CAST(:now AS timestamptz))')} END
            ) ORDER BY pipeline_name, pos, number)::text, '[]') AS json
     FROM rows`,
    { replacements: { tenantId, pipelineId: q.pipelineId ?? null, permitState: q.permitState ?? null, unacknowledged: q.unacknowledged === 'true', now, inPlace: inPlaceStatuses, live: liveStates }, type: QueryTypes.SELECT },
  );
  return row;
}

/** The board's items as objects (the route sends the JSON text as it is). */
export async function boardItems(sequelize: Sequelize, tenantId: string, q: BoardQuery, now: Date): Promise<BoardItem[]> {
  return JSON.parse((await boardItemsJson(sequelize, tenantId, q, now)).json) as BoardItem[];
}
