import type { Migration } from '../migrator';

// Gas monitors, the gas-test record beyond the minimal table of 0003, timed checks of vents, plugs
// and the fire watch, shift handovers, and the markers that make each overdue alert go out once.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE instruments (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  model text NOT NULL,
  serial text NOT NULL,
  last_bump_test_at timestamptz,
  last_calibrated_on date,
  calibration_due_on date NOT NULL,
  retired_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, serial),
  CHECK (last_calibrated_on IS NULL OR calibration_due_on >= last_calibrated_on)
);

ALTER TABLE gas_tests
  ADD COLUMN instrument_id uuid,
  ADD COLUMN series_id uuid,
  ADD COLUMN source text NOT NULL DEFAULT 'manual' CHECK (source IN ('manual', 'import')),
  ADD COLUMN purpose text CHECK (purpose IN ('before_cleaning', 'before_work', 'repeat')),
  ADD COLUMN place_note text,
  ADD COLUMN notes text,
  ADD CONSTRAINT gas_tests_place_check CHECK (place IN ('inside_pipe_upstream', 'inside_pipe_downstream', 'work_area', 'vent_outlet', 'other')),
  ADD CONSTRAINT gas_tests_instrument_fk FOREIGN KEY (tenant_id, instrument_id) REFERENCES instruments (tenant_id, id);
CREATE INDEX gas_tests_series_idx ON gas_tests (tenant_id, series_id) WHERE series_id IS NOT NULL;

-- The permit's own tighter atmosphere limits (a LimitRequest); NULL = the tenant's limits.
ALTER TABLE permits ADD COLUMN gas_limits jsonb;

CREATE TABLE permit_checks (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  kind text NOT NULL CHECK (kind IN ('vent', 'plug', 'fire_watch')),
  isolation_step_id uuid,
  checked_at timestamptz NOT NULL,
  ok boolean NOT NULL,
  observation jsonb NOT NULL DEFAULT '{}'::jsonb,
  action_taken text,
  notes text,
  recorded_by uuid NOT NULL REFERENCES users(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  CHECK (ok OR coalesce(btrim(action_taken), '') <> ''),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, isolation_step_id) REFERENCES isolation_steps (tenant_id, id)
);
CREATE INDEX permit_checks_permit_idx ON permit_checks (tenant_id, permit_id, kind, checked_at DESC);

CREATE TABLE permit_handovers (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  status text NOT NULL DEFAULT 'pending' CHECK (status IN ('pending', 'accepted', 'superseded')),
  from_user_id uuid NOT NULL REFERENCES users(id),
  to_user_id uuid NOT NULL REFERENCES users(id),
  open_points text NOT NULL,
  readings_summary jsonb NOT NULL DEFAULT '[]'::jsonb,
  from_signed_name text NOT NULL,
  from_signed_at timestamptz NOT NULL,
  to_signed_name text,
  accepted_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  CHECK (from_user_id <> to_user_id),
  CHECK (status <> 'accepted' OR (accepted_at IS NOT NULL AND to_signed_name IS NOT NULL)),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
CREATE UNIQUE INDEX permit_handovers_one_pending ON permit_handovers (tenant_id, permit_id) WHERE status = 'pending';
CREATE INDEX permit_handovers_permit_idx ON permit_handovers (tenant_id, permit_id, created_at DESC);

-- One row per overdue occurrence (permit, kind of check, the due time that was missed): inserting it
-- is what sends the alert, so a second scheduler process or a second tick cannot send it again.
CREATE TABLE overdue_alerts (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  kind text NOT NULL CHECK (kind IN ('gas_test', 'vent', 'plug', 'fire_watch')),
  due_at timestamptz NOT NULL,
  detected_at timestamptz NOT NULL,
  resolved_at timestamptz,
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, permit_id, kind, due_at),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
CREATE INDEX overdue_alerts_open_idx ON overdue_alerts (tenant_id, permit_id) WHERE resolved_at IS NULL;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TABLE IF EXISTS overdue_alerts, permit_handovers, permit_checks CASCADE;
ALTER TABLE permits DROP COLUMN IF EXISTS gas_limits;
DROP INDEX IF EXISTS gas_tests_series_idx;
ALTER TABLE gas_tests DROP CONSTRAINT IF EXISTS gas_tests_instrument_fk, DROP CONSTRAINT IF EXISTS gas_tests_place_check,
  DROP COLUMN IF EXISTS instrument_id, DROP COLUMN IF EXISTS series_id, DROP COLUMN IF EXISTS source, DROP COLUMN IF EXISTS purpose,
  DROP COLUMN IF EXISTS place_note, DROP COLUMN IF EXISTS notes;
DROP TABLE IF EXISTS instruments CASCADE;
`);
};
