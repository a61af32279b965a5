import type { Migration } from '../migrator';

/**
 * The permit dossier's background builds. The finished PDF is kept in the row, so whichever server
 * process is asked answers the progress and hands out the file; the process that builds it writes
 * its progress there as it goes.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE dossier_jobs (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  requested_by uuid NOT NULL REFERENCES users(id),
  state text NOT NULL DEFAULT 'running' CHECK (state IN ('running', 'done', 'failed')),
  progress integer NOT NULL DEFAULT 0 CHECK (progress BETWEEN 0 AND 100),
  stage text NOT NULL DEFAULT '',
  pdf bytea,
  size_bytes integer,
  sha256 text,
  error text,
  started_at timestamptz NOT NULL,
  updated_at timestamptz NOT NULL,
  finished_at timestamptz,
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  CHECK ((state = 'done') = (pdf IS NOT NULL)),
  CHECK ((state = 'running') = (finished_at IS NULL))
);
CREATE INDEX dossier_jobs_permit_idx ON dossier_jobs (tenant_id, permit_id, started_at DESC);
SELECT hp_enable_tenant_rls('dossier_jobs');
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS dossier_jobs;`);
};
