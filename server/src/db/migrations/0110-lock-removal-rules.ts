import type { Migration } from '../migrator';

/**
 * Who may take a lock off, and in which order isolations go on and come off.
 *
 * - `applied_seq` counts the steps of a permit in the order they were really applied. It is taken in
 *   the apply transaction, which holds the permit's row lock, so "reverse order of application" no
 *   longer depends on times typed to the minute. Steps already applied are numbered by their time.
 * - A step applied before an earlier step of the plan keeps the reason given for it.
 * - `lock_removal_exceptions`: when the person who put a lock or tag on is not at the site, an
 *   authoriser records that they are away, how and when they were tried, and how they will be told
 *   before they return (OSHA 29 CFR 1910.147(e)(3)(i)–(iii)); the removal that uses it is signed by a
 *   third person and written into the same row. A trigger refuses to mark a lock or tag removed by
 *   anyone but its applier unless such a row names that remover.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE isolation_steps ADD COLUMN applied_seq integer;
ALTER TABLE isolation_steps ADD COLUMN applied_out_of_order_reason text;
UPDATE isolation_steps s SET applied_seq = o.n
FROM (SELECT id, row_number() OVER (PARTITION BY tenant_id, permit_id ORDER BY applied_at, seq) AS n FROM isolation_steps WHERE status <> 'planned') o
WHERE o.id = s.id;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_applied_seq_check CHECK ((status = 'planned') = (applied_seq IS NULL));
CREATE UNIQUE INDEX isolation_steps_applied_seq ON isolation_steps (tenant_id, permit_id, applied_seq) WHERE applied_seq IS NOT NULL;

CREATE TABLE lock_removal_exceptions (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  step_id uuid NOT NULL,
  applier_user_id uuid NOT NULL REFERENCES users(id),
  authoriser_user_id uuid NOT NULL REFERENCES users(id),
  authoriser_signed_name text NOT NULL,
  absence_check text NOT NULL,
  contact_attempts jsonb NOT NULL,
  inform_plan text NOT NULL,
  recorded_at timestamptz NOT NULL,
  remover_user_id uuid REFERENCES users(id),
  remover_signed_name text,
  removed_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, step_id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, step_id) REFERENCES isolation_steps (tenant_id, id),
  CHECK (authoriser_user_id <> applier_user_id),
  CHECK (remover_user_id IS NULL OR (remover_user_id <> applier_user_id AND remover_user_id <> authoriser_user_id)),
  CHECK ((remover_user_id IS NULL) = (removed_at IS NULL) AND (remover_user_id IS NULL) = (remover_signed_name IS NULL)),
  CHECK (jsonb_typeof(contact_attempts) = 'array' AND jsonb_array_length(contact_attempts) > 0)
);
CREATE INDEX lock_removal_exceptions_permit_idx ON lock_removal_exceptions (tenant_id, permit_id);
SELECT hp_enable_tenant_rls('lock_removal_exceptions');

CREATE FUNCTION isolation_steps_removed_by_applier() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.status = 'removed' AND OLD.status <> 'removed' AND (OLD.lock_id IS NOT NULL OR OLD.tag_id IS NOT NULL)
     AND NEW.removed_by IS DISTINCT FROM OLD.applied_by
     AND NOT EXISTS (SELECT 1 FROM lock_removal_exceptions e WHERE e.tenant_id = NEW.tenant_id AND e.step_id = NEW.id AND e.remover_user_id = NEW.removed_by) THEN
    RAISE EXCEPTION 'a lock or tag is removed by the person who applied it, or under a recorded exception' USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER isolation_steps_removed_by_applier BEFORE UPDATE OF status ON isolation_steps
  FOR EACH ROW EXECUTE FUNCTION isolation_steps_removed_by_applier();
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TRIGGER IF EXISTS isolation_steps_removed_by_applier ON isolation_steps;
DROP FUNCTION IF EXISTS isolation_steps_removed_by_applier();
DROP TABLE IF EXISTS lock_removal_exceptions;
DROP INDEX IF EXISTS isolation_steps_applied_seq;
ALTER TABLE isolation_steps DROP CONSTRAINT IF EXISTS isolation_steps_applied_seq_check;
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS applied_out_of_order_reason;
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS applied_seq;
`);
};
