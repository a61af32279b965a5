import { QueryTypes, type Sequelize } from 'sequelize';
import type { IsolationStep } from '@shared/types/isolations';

/** A step as the server reads it: the shared record with its moments as Dates. */
export type StepRow = IsolationStep<Date>;

export const stepSelect = `
  SELECT s.id, s.permit_id AS "permitId", s.seq, s.point_id AS "pointId", coalesce(ip.tag_code, s.temp_label) AS label,
         coalesce(ip.position, s.temp_position)::float8 AS position, s.kind, s.condition, s.status, s.remotely_operable AS "remotelyOperable",
         s.lock_id AS "lockId", l.number AS "lockNumber", s.tag_id AS "tagId", t.number AS "tagNumber",
         s.applied_by AS "appliedBy", ua.name AS "appliedByName", s.applied_at AS "appliedAt", s.applied_entered_late AS "appliedEnteredLate", s.photo_attachment_id AS "photoAttachmentId",
         s.remote_ack_at AS "remoteAckAt", ur.name AS "remoteAckByName",
         s.verified_by AS "verifiedBy", uv.name AS "verifiedByName", s.verified_at AS "verifiedAt", s.verification_method AS "verificationMethod",
         s.verification_reading::float8 AS "verificationReading", s.verification_unit AS "verificationUnit", s.verification_notes AS "verificationNotes",
         ux.name AS "removedByName", s.removed_at AS "removedAt", s.removal_note AS "removalNote",
         s.control_room_ack_applied_at AS "controlRoomAckAppliedAt", s.control_room_ack_removed_at AS "controlRoomAckRemovedAt",
         s.plug_diameter_in::float8 AS "plugDiameterIn", s.plug_as_built AS "plugAsBuilt", s.plug_warnings AS "plugWarnings", s.plug_warnings_ack_at AS "plugWarningsAckAt",
         s.line_stop_as_built AS "lineStopAsBuilt",
         s.applied_seq AS "appliedSeq", s.applied_out_of_order_reason AS "appliedOutOfOrderReason",
         e.recorded_at AS "exceptionRecordedAt", e.authoriser_user_id AS "exceptionAuthoriserId", ue.name AS "exceptionAuthoriserName",
         (e.removed_at IS NOT NULL) AS "removedUnderException",
         coalesce(s.held_by, s.applied_by) AS "heldBy", coalesce(uh.name, ua.name) AS "heldByName",
         (SELECT max(lt.transferred_at) FROM lock_transfers lt WHERE lt.tenant_id = s.tenant_id AND lt.step_id = s.id) AS "handedOverAt"
  FROM isolation_steps s
  LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
  LEFT JOIN locks l ON l.tenant_id = s.tenant_id AND l.id = s.lock_id
  LEFT JOIN tags t ON t.tenant_id = s.tenant_id AND t.id = s.tag_id
  LEFT JOIN users ua ON ua.id = s.applied_by
  LEFT JOIN users uv ON uv.id = s.verified_by
  LEFT JOIN users ur ON ur.id = s.remote_ack_by
  LEFT JOIN users ux ON ux.id = s.removed_by
  LEFT JOIN lock_removal_exceptions e ON e.tenant_id = s.tenant_id AND e.step_id = s.id
  LEFT JOIN users ue ON ue.id = e.authoriser_user_id
  LEFT JOIN users uh ON uh.id = s.held_by`;

export async function listSteps(sequelize: Sequelize, tenantId: string, permitId: string): Promise<StepRow[]> {
  return sequelize.query<StepRow>(`${stepSelect} WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId ORDER BY s.seq`, {
    replacements: { tenantId, permitId },
    type: QueryTypes.SELECT,
  });
}

export async function findStep(sequelize: Sequelize, tenantId: string, permitId: string, stepId: string, lock = false): Promise<StepRow | null> {
  if (lock) await sequelize.query(`SELECT 1 FROM isolation_steps WHERE tenant_id = :tenantId AND id = :stepId FOR UPDATE`, { replacements: { tenantId, stepId } });
  const rows = await sequelize.query<StepRow>(`${stepSelect} WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId AND s.id = :stepId`, {
    replacements: { tenantId, permitId, stepId },
    type: QueryTypes.SELECT,
  });
  return rows[0] ?? null;
}

export async function notifyChange(sequelize: Sequelize, payload: Record<string, unknown>) {
  await sequelize.query(`SELECT pg_notify('holdpoint_changes', :payload)`, { replacements: { payload: JSON.stringify(payload) } });
}
