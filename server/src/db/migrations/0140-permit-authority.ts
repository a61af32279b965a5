import type { Migration } from '../migrator';

/**
 * Who may approve, resume and close a permit (HSE HSG250: the person who issues a permit is not the
 * one who wrote it; work stopped by the issuing side restarts only on its word).
 *
 * - `permit_editors`: everyone who wrote or changed a permit's content or its isolation plan, the
 *   requester included. Filled in the same transaction as each edit; nobody listed may approve.
 *   Backfilled from the requester and the permit's creation, edit and plan events.
 * - `permits.suspended_by_kind` (with who, when and why): who stopped the work, as in
 *   shared/permit/suspension.ts. Set on every suspension and cleared on resume; a suspended permit
 *   always has one. Backfilled from the audit event that suspended it (none found: Holdpoint, so an
 *   authoriser must look at it before work starts again).
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE permit_editors (
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  user_id uuid NOT NULL REFERENCES users(id),
  first_edited_at timestamptz NOT NULL,
  last_edited_at timestamptz NOT NULL,
  PRIMARY KEY (tenant_id, permit_id, user_id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  CHECK (last_edited_at >= first_edited_at)
);
SELECT hp_enable_tenant_rls('permit_editors');

INSERT INTO permit_editors (tenant_id, permit_id, user_id, first_edited_at, last_edited_at)
SELECT tenant_id, permit_id, user_id, min(at), max(at) FROM (
  SELECT p.tenant_id, p.id AS permit_id, p.requester_user_id AS user_id, p.created_at AS at FROM permits p
  UNION ALL
  SELECT a.tenant_id, a.permit_id, a.actor_user_id, a.occurred_at FROM audit_events a
  WHERE a.entity_type = 'permit' AND a.permit_id IS NOT NULL AND a.actor_user_id IS NOT NULL AND a.action IN ('created', 'edited', 'plan_saved')
) e
GROUP BY tenant_id, permit_id, user_id;

ALTER TABLE permits
  ADD COLUMN suspended_by_kind text CHECK (suspended_by_kind IN ('lead', 'authoriser', 'control_room', 'system')),
  ADD COLUMN suspended_by_user_id uuid REFERENCES users(id),
  ADD COLUMN suspended_at timestamptz,
  ADD COLUMN suspension_reason text;

UPDATE permits p SET
  suspended_by_kind = coalesce(CASE s.actor_role WHEN 'authoriser' THEN 'authoriser' WHEN 'control_room' THEN 'control_room' WHEN 'contractor_lead' THEN 'lead' END, 'system'),
  suspended_by_user_id = s.actor_user_id,
  suspended_at = coalesce(s.occurred_at, p.updated_at),
  suspension_reason = s.reason
FROM permits p2 LEFT JOIN LATERAL (
  SELECT a.actor_role, a.actor_user_id, a.occurred_at, a.reason FROM audit_events a
  WHERE a.tenant_id = p2.tenant_id AND a.permit_id = p2.id AND a.entity_type = 'permit' AND a.to_state = 'suspended'
  ORDER BY a.seq DESC LIMIT 1
) s ON true
WHERE p.tenant_id = p2.tenant_id AND p.id = p2.id AND p.state = 'suspended';

ALTER TABLE permits ADD CONSTRAINT permits_suspension_recorded CHECK (state <> 'suspended' OR (suspended_by_kind IS NOT NULL AND suspended_at IS NOT NULL));
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE permits DROP CONSTRAINT IF EXISTS permits_suspension_recorded;
ALTER TABLE permits DROP COLUMN IF EXISTS suspension_reason, DROP COLUMN IF EXISTS suspended_at, DROP COLUMN IF EXISTS suspended_by_user_id, DROP COLUMN IF EXISTS suspended_by_kind;
DROP TABLE IF EXISTS permit_editors;
`);
};
