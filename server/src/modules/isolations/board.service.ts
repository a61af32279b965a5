import { QueryTypes, type Sequelize } from 'sequelize';
import { z } from 'zod';
import { uuidSchema } from '@shared/schemas/common.schema';

export const boardQuerySchema = z.object({
  pipelineId: uuidSchema.optional(),
  permitState: z.enum(['accepted', 'isolated', 'live', 'suspended', 'work_complete', 'cancelled']).optional(),
});
export type BoardQuery = z.infer<typeof boardQuerySchema>;

export interface BoardItem {
  stepId: string;
  status: 'applied' | 'verified';
  pipelineId: string;
  pipelineName: string;
  pointId: string | null;
  label: string;
  position: number;
  kind: string;
  condition: string;
  lockNumber: string | null;
  tagNumber: string | null;
  appliedAt: string;
  appliedByName: string;
  verifiedAt: string | null;
  verifiedByName: string | null;
  remotelyOperable: boolean;
  remoteAckAt: string | null;
  controlRoomAckAppliedAt: string | null;
  plugBuiltAt: string | null;
  /** The permit this step belongs to, with its work range (for the envelope on the strip). */
  permit: { id: string; number: string; state: string; fromPosition: number; toPosition: number };
  permits: { id: string; number: string; state: string }[];
  nextGasTestDue: string | null;
}

/**
 * Every isolation applied right now in the tenant, one row per applied step, ordered by pipeline and
 * position. `permits` lists every permit holding the same point (group lockout). One query.
 * A live permit that has never had a passing gas test is due one now (the clock's now, so tests can move it).
 */
export async function boardItems(sequelize: Sequelize, tenantId: string, q: BoardQuery, now: Date): Promise<BoardItem[]> {
  return sequelize.query<BoardItem>(
    `WITH live AS (
       SELECT s.*, p.number, p.state AS permit_state, p.pipeline_id, p.gas_test_interval_minutes, p.from_position::float8 AS work_from, p.to_position::float8 AS work_to
       FROM isolation_steps s JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
       WHERE s.tenant_id = :tenantId AND s.status IN ('applied','verified')
         AND (CAST(:pipelineId AS uuid) IS NULL OR p.pipeline_id = CAST(:pipelineId AS uuid))
         AND (CAST(:permitState AS text) IS NULL OR p.state = CAST(:permitState AS text))
     ), holders AS (
       -- Every permit holding the point, whatever the filters: a filtered board must not hide a group lockout.
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
     ORDER BY pl.name, position, l.number`,
    { replacements: { tenantId, pipelineId: q.pipelineId ?? null, permitState: q.permitState ?? null, now }, type: QueryTypes.SELECT },
  );
}
