import type { Migration } from '../migrator';

/**
 * Shift change and the absent crew member (OSHA 29 CFR 1910.147(f)(4), (e)(3)).
 *
 * - `isolation_steps.held_by`: who holds the lock or tag now, once a shift change has passed it on
 *   (null: still the person who applied it). Only that person takes it off, or someone else under a
 *   recorded exception: the removal trigger of 0110 now reads the holder.
 * - `lock_transfers`: each handover, signed by both people: a lock on an isolation point swapped for
 *   the oncoming person's own lock (and tag), or a personal lock on the lockbox swapped for the
 *   oncoming person's. The holder of a step changes only with such a row naming the new holder and
 *   their lock.
 * - `lock_removal_exceptions` also covers a personal lock on the lockbox (`crew_member_id`), so a
 *   crew member who left the site without signing off is handled by the same signed procedure; a
 *   trigger replaces the rule "only the person signs off" with "the person, or under such a record".
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE isolation_steps ADD COLUMN held_by uuid REFERENCES users(id);

CREATE TABLE lock_transfers (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  kind text NOT NULL CHECK (kind IN ('lock', 'lockbox')),
  step_id uuid,
  from_crew_member_id uuid,
  to_crew_member_id uuid,
  from_user_id uuid NOT NULL REFERENCES users(id),
  to_user_id uuid NOT NULL REFERENCES users(id),
  old_lock_number text,
  new_lock_number text NOT NULL CHECK (length(btrim(new_lock_number)) BETWEEN 1 AND 40),
  new_lock_id uuid,
  old_tag_number text,
  new_tag_number text,
  from_signed_name text NOT NULL,
  to_signed_name text NOT NULL,
  transferred_at timestamptz NOT NULL,
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, step_id) REFERENCES isolation_steps (tenant_id, id),
  FOREIGN KEY (tenant_id, from_crew_member_id) REFERENCES permit_crew_members (tenant_id, id),
  FOREIGN KEY (tenant_id, to_crew_member_id) REFERENCES permit_crew_members (tenant_id, id),
  CHECK (from_user_id <> to_user_id),
  CHECK ((kind = 'lock') = (step_id IS NOT NULL)),
  CHECK ((kind = 'lockbox') = (from_crew_member_id IS NOT NULL AND to_crew_member_id IS NOT NULL))
);
CREATE INDEX lock_transfers_permit_idx ON lock_transfers (tenant_id, permit_id, transferred_at);
SELECT hp_enable_tenant_rls('lock_transfers');

CREATE FUNCTION isolation_steps_held_by_transfer() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.held_by IS DISTINCT FROM OLD.held_by AND NOT EXISTS (
       SELECT 1 FROM lock_transfers t WHERE t.tenant_id = NEW.tenant_id AND t.step_id = NEW.id AND t.to_user_id = NEW.held_by
         AND t.new_lock_id IS NOT DISTINCT FROM NEW.lock_id) THEN
    RAISE EXCEPTION 'a lock passes to another person only through a signed transfer' USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER isolation_steps_held_by_transfer BEFORE UPDATE OF held_by ON isolation_steps
  FOR EACH ROW EXECUTE FUNCTION isolation_steps_held_by_transfer();

CREATE OR REPLACE FUNCTION isolation_steps_removed_by_applier() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.status = 'removed' AND OLD.status <> 'removed' AND (OLD.lock_id IS NOT NULL OR OLD.tag_id IS NOT NULL)
     AND NEW.removed_by IS DISTINCT FROM coalesce(OLD.held_by, OLD.applied_by)
     AND NOT EXISTS (SELECT 1 FROM lock_removal_exceptions e WHERE e.tenant_id = NEW.tenant_id AND e.step_id = NEW.id AND e.remover_user_id = NEW.removed_by) THEN
    RAISE EXCEPTION 'a lock or tag is removed by the person who holds it, or under a recorded exception' USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;

ALTER TABLE lock_removal_exceptions ALTER COLUMN step_id DROP NOT NULL;
ALTER TABLE lock_removal_exceptions ADD COLUMN crew_member_id uuid;
ALTER TABLE lock_removal_exceptions ADD CONSTRAINT lock_removal_exceptions_crew_member_fk FOREIGN KEY (tenant_id, crew_member_id) REFERENCES permit_crew_members (tenant_id, id);
ALTER TABLE lock_removal_exceptions ADD CONSTRAINT lock_removal_exceptions_one_device CHECK ((step_id IS NULL) <> (crew_member_id IS NULL));
ALTER TABLE lock_removal_exceptions ADD CONSTRAINT lock_removal_exceptions_crew_member_once UNIQUE (tenant_id, crew_member_id);

DO $$
DECLARE c text;
BEGIN
  FOR c IN SELECT conname FROM pg_constraint WHERE conrelid = 'permit_crew_members'::regclass AND contype = 'c' AND pg_get_constraintdef(oid) LIKE '%signed_off_by = user_id%' LOOP
    EXECUTE format('ALTER TABLE permit_crew_members DROP CONSTRAINT %I', c);
  END LOOP;
END $$;
CREATE FUNCTION permit_crew_members_signed_off_by_owner() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.signed_off_by IS NOT NULL AND NEW.signed_off_by <> NEW.user_id
     AND NOT EXISTS (SELECT 1 FROM lock_removal_exceptions e WHERE e.tenant_id = NEW.tenant_id AND e.crew_member_id = NEW.id AND e.remover_user_id = NEW.signed_off_by) THEN
    RAISE EXCEPTION 'a personal lock comes off by its owner, or under a recorded exception' USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER permit_crew_members_signed_off_by_owner BEFORE INSERT OR UPDATE ON permit_crew_members
  FOR EACH ROW EXECUTE FUNCTION permit_crew_members_signed_off_by_owner();
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TRIGGER IF EXISTS permit_crew_members_signed_off_by_owner ON permit_crew_members;
DROP FUNCTION IF EXISTS permit_crew_members_signed_off_by_owner();
DELETE FROM lock_removal_exceptions WHERE crew_member_id IS NOT NULL;
ALTER TABLE permit_crew_members ADD CONSTRAINT permit_crew_members_signed_off_by_owner CHECK (signed_off_by IS NULL OR signed_off_by = user_id) NOT VALID;
ALTER TABLE lock_removal_exceptions DROP CONSTRAINT IF EXISTS lock_removal_exceptions_crew_member_once;
ALTER TABLE lock_removal_exceptions DROP CONSTRAINT IF EXISTS lock_removal_exceptions_one_device;
ALTER TABLE lock_removal_exceptions DROP CONSTRAINT IF EXISTS lock_removal_exceptions_crew_member_fk;
ALTER TABLE lock_removal_exceptions DROP COLUMN IF EXISTS crew_member_id;
ALTER TABLE lock_removal_exceptions ALTER COLUMN step_id SET NOT NULL;
CREATE OR REPLACE FUNCTION isolation_steps_removed_by_applier() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF NEW.status = 'removed' AND OLD.status <> 'removed' AND (OLD.lock_id IS NOT NULL OR OLD.tag_id IS NOT NULL)
     AND NEW.removed_by IS DISTINCT FROM OLD.applied_by
     AND NOT EXISTS (SELECT 1 FROM lock_removal_exceptions e WHERE e.tenant_id = NEW.tenant_id AND e.step_id = NEW.id AND e.remover_user_id = NEW.removed_by) THEN
    RAISE EXCEPTION 'a lock or tag is removed by the person who applied it, or under a recorded exception' USING ERRCODE = 'check_violation';
  END IF;
  RETURN NEW;
END $$;
DROP TRIGGER IF EXISTS isolation_steps_held_by_transfer ON isolation_steps;
DROP FUNCTION IF EXISTS isolation_steps_held_by_transfer();
DROP TABLE IF EXISTS lock_transfers;
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS held_by;
`);
};
