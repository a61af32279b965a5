import type { Sequelize } from 'sequelize';

/**
 * Notes that this person wrote or changed the permit's content or its isolation plan, in the
 * caller's transaction (the same one as the edit). Nobody noted here may approve the permit.
 */
export async function recordPermitEditor(sequelize: Sequelize, tenantId: string, permitId: string, userId: string, at: Date) {
  await sequelize.query(
    `INSERT INTO permit_editors (tenant_id, permit_id, user_id, first_edited_at, last_edited_at) VALUES (:tenantId, :permitId, :userId, :at, :at)
     ON CONFLICT (tenant_id, permit_id, user_id) DO UPDATE SET last_edited_at = greatest(permit_editors.last_edited_at, EXCLUDED.last_edited_at)`,
    { replacements: { tenantId, permitId, userId, at } },
  );
}
