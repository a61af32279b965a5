import type { Migration } from '../migrator';

/**
 * Group lockout per person (OSHA 29 CFR 1910.147(f)(3)(ii)(D)), for tenants whose `groupLockout`
 * setting is `per_person`.
 *
 * - `permit_lockboxes`: one box per permit holding the keys of the permit's applied locks; its label
 *   is what is written on the box.
 * - `permit_crew_members`: each person working signs on with their personal lock on the box and signs
 *   off by taking it off. A person is on the box at most once at a time, and a personal lock number
 *   is on one box of a permit at most once at a time.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE permit_lockboxes (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  label text NOT NULL CHECK (length(btrim(label)) BETWEEN 1 AND 60),
  created_by uuid NOT NULL REFERENCES users(id),
  created_at timestamptz NOT NULL,
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, permit_id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id)
);
SELECT hp_enable_tenant_rls('permit_lockboxes');

CREATE TABLE permit_crew_members (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  lockbox_id uuid NOT NULL,
  user_id uuid NOT NULL REFERENCES users(id),
  personal_lock_number text NOT NULL CHECK (length(btrim(personal_lock_number)) BETWEEN 1 AND 40),
  signed_on_at timestamptz NOT NULL,
  signed_on_by uuid NOT NULL REFERENCES users(id),
  signed_off_at timestamptz,
  signed_off_by uuid REFERENCES users(id),
  created_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, lockbox_id) REFERENCES permit_lockboxes (tenant_id, id),
  CHECK ((signed_off_at IS NULL) = (signed_off_by IS NULL)),
  CHECK (signed_off_at IS NULL OR signed_off_at >= signed_on_at),
  -- Only the person takes their own personal lock off (OSHA 29 CFR 1910.147(e)(3)).
  CHECK (signed_off_by IS NULL OR signed_off_by = user_id)
);
CREATE UNIQUE INDEX permit_crew_members_one_on ON permit_crew_members (tenant_id, permit_id, user_id) WHERE signed_off_at IS NULL;
CREATE UNIQUE INDEX permit_crew_members_lock_on ON permit_crew_members (tenant_id, permit_id, lower(btrim(personal_lock_number))) WHERE signed_off_at IS NULL;
CREATE INDEX permit_crew_members_permit_idx ON permit_crew_members (tenant_id, permit_id, signed_on_at);
SELECT hp_enable_tenant_rls('permit_crew_members');
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TABLE IF EXISTS permit_crew_members;
DROP TABLE IF EXISTS permit_lockboxes;
`);
};
