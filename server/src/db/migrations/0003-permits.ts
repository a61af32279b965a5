import type { Migration } from '../migrator';

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE permit_sequences (
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  year integer NOT NULL,
  last integer NOT NULL DEFAULT 0,
  PRIMARY KEY (tenant_id, year)
);

-- The hazards-and-precautions checklist a tenant asks for, per kind of work.
CREATE TABLE checklist_templates (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  key text NOT NULL,
  label text NOT NULL,
  required_for text[] NOT NULL DEFAULT '{}',
  stage text NOT NULL DEFAULT 'before_work' CHECK (stage IN ('before_work', 'walkdown')),
  sort integer NOT NULL DEFAULT 0,
  UNIQUE (tenant_id, key),
  UNIQUE (tenant_id, id)
);

CREATE TABLE permits (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  number text NOT NULL,
  state text NOT NULL DEFAULT 'draft',
  version integer NOT NULL DEFAULT 1,
  kinds text[] NOT NULL,
  title text NOT NULL,
  scope text NOT NULL DEFAULT '',
  pipeline_id uuid NOT NULL,
  from_position numeric(9,3) NOT NULL,
  to_position numeric(9,3) NOT NULL,
  job_reference text,
  method_statement text NOT NULL DEFAULT '',
  hazards text NOT NULL DEFAULT '',
  ppe text[] NOT NULL DEFAULT '{}',
  checklist jsonb NOT NULL DEFAULT '[]'::jsonb,
  walkdown jsonb NOT NULL DEFAULT '[]'::jsonb,
  valid_from timestamptz NOT NULL,
  valid_to timestamptz NOT NULL,
  contractor_organisation_id uuid NOT NULL,
  contractor_lead_user_id uuid REFERENCES users(id),
  requester_user_id uuid NOT NULL REFERENCES users(id),
  authoriser_user_id uuid REFERENCES users(id),
  holder_user_id uuid REFERENCES users(id),
  fire_watch_minutes integer NOT NULL DEFAULT 60 CHECK (fire_watch_minutes >= 30),
  fire_watch_person text,
  gas_test_window_minutes integer NOT NULL DEFAULT 30 CHECK (gas_test_window_minutes BETWEEN 5 AND 240),
  gas_test_interval_minutes integer NOT NULL DEFAULT 30 CHECK (gas_test_interval_minutes BETWEEN 5 AND 480),
  hot_work_ended_at timestamptz,
  control_room_ack_at timestamptz,
  control_room_ack_by uuid REFERENCES users(id),
  rejection_reason text,
  state_before_expiry text,
  expired_flag boolean NOT NULL DEFAULT false,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, number),
  CHECK (valid_to > valid_from),
  CHECK (to_position >= from_position),
  CHECK (state IN ('draft','requested','approved','accepted','isolated','live','suspended','work_complete','returned_to_service','closed','cancelled','expired')),
  FOREIGN KEY (tenant_id, pipeline_id) REFERENCES pipelines (tenant_id, id),
  FOREIGN KEY (tenant_id, contractor_organisation_id) REFERENCES organisations (tenant_id, id)
);
CREATE INDEX permits_list_idx ON permits (tenant_id, state, valid_from DESC);
CREATE INDEX permits_pipeline_idx ON permits (tenant_id, pipeline_id);
CREATE INDEX permits_contractor_idx ON permits (tenant_id, contractor_organisation_id);
CREATE INDEX permits_created_idx ON permits (tenant_id, created_at DESC);

CREATE TABLE permit_signatures (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  event text NOT NULL,
  user_id uuid NOT NULL REFERENCES users(id),
  signed_name text NOT NULL,
  password_confirmed boolean NOT NULL,
  signed_at timestamptz NOT NULL,
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
CREATE INDEX permit_signatures_permit_idx ON permit_signatures (tenant_id, permit_id);

-- Gas tests: the lifecycle guards read the latest pass and fail; the gas-test feature adds instruments and more.
CREATE TABLE gas_tests (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  tester_user_id uuid NOT NULL REFERENCES users(id),
  place text NOT NULL,
  tested_at timestamptz NOT NULL,
  readings jsonb NOT NULL,
  verdict text NOT NULL CHECK (verdict IN ('pass', 'fail')),
  assessment jsonb NOT NULL DEFAULT '{}'::jsonb,
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
CREATE INDEX gas_tests_permit_idx ON gas_tests (tenant_id, permit_id, tested_at DESC);

-- Append-only audit trail with a hash chain per tenant. The head row serialises writers of one tenant.
CREATE TABLE audit_chain_heads (
  tenant_id uuid PRIMARY KEY REFERENCES tenants(id),
  seq bigint NOT NULL DEFAULT 0,
  last_hash text NOT NULL DEFAULT ''
);

CREATE TABLE audit_events (
  id bigserial PRIMARY KEY,
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  seq bigint NOT NULL,
  entity_type text NOT NULL,
  entity_id uuid NOT NULL,
  permit_id uuid,
  action text NOT NULL,
  from_state text,
  to_state text,
  actor_user_id uuid REFERENCES users(id),
  actor_name text,
  actor_role text,
  membership_id uuid,
  reason text,
  ip text,
  data jsonb NOT NULL DEFAULT '{}'::jsonb,
  occurred_at timestamptz NOT NULL,
  prev_hash text NOT NULL,
  hash text NOT NULL,
  UNIQUE (tenant_id, seq)
);
CREATE INDEX audit_events_permit_idx ON audit_events (tenant_id, permit_id, seq);

CREATE FUNCTION audit_events_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  RAISE EXCEPTION 'audit events are append-only' USING ERRCODE = 'insufficient_privilege';
END $$;
CREATE TRIGGER audit_events_append_only BEFORE UPDATE OR DELETE ON audit_events
  FOR EACH ROW EXECUTE FUNCTION audit_events_refuse_change();
CREATE TRIGGER audit_events_no_truncate BEFORE TRUNCATE ON audit_events
  FOR EACH STATEMENT EXECUTE FUNCTION audit_events_refuse_change();

CREATE TABLE attachments (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid,
  entity_type text NOT NULL,
  entity_id uuid NOT NULL,
  original_name text NOT NULL,
  stored_name text NOT NULL UNIQUE,
  content_type text NOT NULL,
  size_bytes integer NOT NULL,
  sha256 text NOT NULL,
  uploaded_by uuid NOT NULL REFERENCES users(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
CREATE INDEX attachments_entity_idx ON attachments (tenant_id, entity_type, entity_id);

CREATE TABLE idempotency_keys (
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  user_id uuid NOT NULL REFERENCES users(id),
  key text NOT NULL,
  request_hash text NOT NULL,
  status integer,
  body jsonb,
  created_at timestamptz NOT NULL DEFAULT now(),
  PRIMARY KEY (tenant_id, user_id, key)
);
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS idempotency_keys, attachments, audit_events, audit_chain_heads, gas_tests, permit_signatures, permits, checklist_templates, permit_sequences CASCADE;
    DROP FUNCTION IF EXISTS audit_events_refuse_change();`);
};
