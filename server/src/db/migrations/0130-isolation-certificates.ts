import type { Migration } from '../migrator';

/**
 * Isolation certificates and long-term isolations (HSE HSG253, HSG250: an isolation certificate,
 * cross-referenced by the permit to work, may be kept beyond one permit and is then inspected at
 * intervals).
 *
 * - `isolation_certificates`: one record per isolated section of a pipeline (from/to positions),
 *   numbered IC-YYYY-NNNN per tenant and year, signed by the authoriser who signed the isolations in
 *   place; live until returned. A long-term certificate carries its reason, the re-check interval and
 *   when the next re-check is due; `problem` holds a failed re-check until a passing one clears it.
 * - `isolation_steps.certificate_id`: the steps (devices, vents, drains) the certificate covers. The
 *   steps stay the issuing permit's rows, so the lock and removal rules keep working on them.
 * - `certificate_permits`: which permits rely on the certificate (linked_at, released_at); a permit
 *   relies on at most one certificate at a time.
 * - `isolation_rechecks`: each re-check of a long-term isolation, pass or fail, by whom.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE certificate_sequences (
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  year integer NOT NULL,
  last integer NOT NULL,
  PRIMARY KEY (tenant_id, year)
);
SELECT hp_enable_tenant_rls('certificate_sequences');

CREATE TABLE isolation_certificates (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  number text NOT NULL,
  pipeline_id uuid NOT NULL,
  from_position numeric(9,3) NOT NULL,
  to_position numeric(9,3) NOT NULL,
  issued_for_permit_id uuid NOT NULL,
  proving_id uuid,
  state text NOT NULL DEFAULT 'live' CHECK (state IN ('live', 'returned')),
  issued_by uuid NOT NULL REFERENCES users(id),
  issued_signed_name text NOT NULL,
  issued_at timestamptz NOT NULL,
  long_term boolean NOT NULL DEFAULT false,
  long_term_reason text,
  long_term_by uuid REFERENCES users(id),
  long_term_at timestamptz,
  recheck_hours integer CHECK (recheck_hours IS NULL OR recheck_hours > 0),
  next_recheck_due timestamptz,
  recheck_alerted_due timestamptz,
  problem text,
  problem_at timestamptz,
  returned_by uuid REFERENCES users(id),
  returned_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, number),
  FOREIGN KEY (tenant_id, pipeline_id) REFERENCES pipelines (tenant_id, id),
  FOREIGN KEY (tenant_id, issued_for_permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, proving_id) REFERENCES isolation_provings (tenant_id, id),
  CHECK (to_position >= from_position),
  CHECK ((state = 'returned') = (returned_at IS NOT NULL)),
  CHECK (NOT long_term OR (length(btrim(long_term_reason)) >= 3 AND long_term_at IS NOT NULL AND recheck_hours IS NOT NULL AND next_recheck_due IS NOT NULL))
);
CREATE INDEX isolation_certificates_live_idx ON isolation_certificates (tenant_id, pipeline_id) WHERE state = 'live';
CREATE INDEX isolation_certificates_recheck_idx ON isolation_certificates (tenant_id, next_recheck_due) WHERE state = 'live' AND long_term;
SELECT hp_enable_tenant_rls('isolation_certificates');

ALTER TABLE isolation_steps ADD COLUMN certificate_id uuid;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_certificate_fk FOREIGN KEY (tenant_id, certificate_id) REFERENCES isolation_certificates (tenant_id, id);
CREATE INDEX isolation_steps_certificate_idx ON isolation_steps (tenant_id, certificate_id) WHERE certificate_id IS NOT NULL;

CREATE TABLE certificate_permits (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  certificate_id uuid NOT NULL,
  permit_id uuid NOT NULL,
  linked_by uuid REFERENCES users(id),
  linked_at timestamptz NOT NULL,
  released_at timestamptz,
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, certificate_id) REFERENCES isolation_certificates (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  CHECK (released_at IS NULL OR released_at >= linked_at)
);
CREATE UNIQUE INDEX certificate_permits_one_relied ON certificate_permits (tenant_id, permit_id) WHERE released_at IS NULL;
CREATE INDEX certificate_permits_certificate_idx ON certificate_permits (tenant_id, certificate_id);
SELECT hp_enable_tenant_rls('certificate_permits');

CREATE TABLE isolation_rechecks (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  certificate_id uuid NOT NULL,
  checked_at timestamptz NOT NULL,
  checked_by uuid NOT NULL REFERENCES users(id),
  locks_and_tags_intact boolean NOT NULL,
  valves_still_closed boolean NOT NULL,
  gauge_reading numeric NOT NULL,
  gauge_unit text NOT NULL CHECK (gauge_unit IN ('psig','kPa','bar')),
  max_pressure numeric NOT NULL,
  max_pressure_unit text NOT NULL CHECK (max_pressure_unit IN ('psig','kPa','bar')),
  result text NOT NULL CHECK (result IN ('pass', 'fail')),
  failure text,
  notes text,
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, certificate_id) REFERENCES isolation_certificates (tenant_id, id),
  CHECK ((result = 'fail') = (failure IS NOT NULL))
);
CREATE INDEX isolation_rechecks_certificate_idx ON isolation_rechecks (tenant_id, certificate_id, checked_at);
SELECT hp_enable_tenant_rls('isolation_rechecks');
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TABLE IF EXISTS isolation_rechecks;
DROP TABLE IF EXISTS certificate_permits;
ALTER TABLE isolation_steps DROP CONSTRAINT IF EXISTS isolation_steps_certificate_fk;
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS certificate_id;
DROP TABLE IF EXISTS isolation_certificates;
DROP TABLE IF EXISTS certificate_sequences;
`);
};
