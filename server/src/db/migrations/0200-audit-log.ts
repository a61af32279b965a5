import type { Migration } from '../migrator';

/**
 * The tenant-wide audit log: indexes for its filters (who, kind, record, time; the permit's exists
 * since 0003), the background chain checks whose progress the page polls, and the signed checkpoints
 * of the chain head. A checkpoint is append-only like the events it vouches for; its worth does not
 * rest on that (it is signed with a key the database never holds and mailed out), the trigger only
 * keeps honest mistakes away.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE INDEX audit_events_actor_idx ON audit_events (tenant_id, actor_user_id, seq);
CREATE INDEX audit_events_action_idx ON audit_events (tenant_id, action, seq);
CREATE INDEX audit_events_entity_idx ON audit_events (tenant_id, entity_id, seq);
CREATE INDEX audit_events_occurred_idx ON audit_events (tenant_id, occurred_at);

CREATE TABLE audit_chain_checks (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  -- The order checks were started in (a test's clock may stand still).
  n bigint GENERATED ALWAYS AS IDENTITY,
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  status text NOT NULL DEFAULT 'running' CHECK (status IN ('running', 'done', 'failed')),
  checked bigint NOT NULL DEFAULT 0,
  total bigint NOT NULL DEFAULT 0,
  ok boolean,
  last_seq bigint,
  breaks jsonb NOT NULL DEFAULT '[]'::jsonb,
  started_by uuid REFERENCES users(id),
  started_at timestamptz NOT NULL,
  finished_at timestamptz,
  UNIQUE (tenant_id, id)
);
CREATE INDEX audit_chain_checks_tenant_idx ON audit_chain_checks (tenant_id, n DESC);
SELECT hp_enable_tenant_rls('audit_chain_checks');

CREATE TABLE audit_checkpoints (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  seq bigint NOT NULL CHECK (seq >= 0),
  hash text NOT NULL,
  signed_at timestamptz NOT NULL,
  reason text NOT NULL CHECK (reason IN ('interval', 'print', 'request')),
  payload text NOT NULL,
  signature text NOT NULL,
  key_id text NOT NULL,
  UNIQUE (tenant_id, id)
);
CREATE INDEX audit_checkpoints_tenant_idx ON audit_checkpoints (tenant_id, signed_at DESC);
SELECT hp_enable_tenant_rls('audit_checkpoints');
CREATE TRIGGER audit_checkpoints_append_only BEFORE UPDATE OR DELETE ON audit_checkpoints
  FOR EACH ROW EXECUTE FUNCTION audit_events_refuse_change();
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TABLE IF EXISTS audit_checkpoints, audit_chain_checks;
DROP INDEX IF EXISTS audit_events_actor_idx, audit_events_action_idx, audit_events_entity_idx, audit_events_occurred_idx;`);
};
