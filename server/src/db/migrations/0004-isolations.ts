import type { Migration } from '../migrator';

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
-- One row per step of a permit's isolation plan. Group lockout: two permits relying on one valve
-- each have their own step on it, with their own lock; the point stays isolated while any remains.
CREATE TABLE isolation_steps (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  seq integer NOT NULL,
  point_id uuid,
  temp_label text,
  temp_position numeric(9,3),
  kind text NOT NULL CHECK (kind IN ('block_valve','vent','drain','plug','blind','isolator')),
  condition text NOT NULL CHECK (condition IN ('closed_locked_tagged','drained','vent_open','plug_built','blind_fitted','energy_isolated')),
  status text NOT NULL DEFAULT 'planned' CHECK (status IN ('planned','applied','verified','removed')),
  remotely_operable boolean NOT NULL DEFAULT false,
  lock_id uuid,
  tag_id uuid,
  applied_by uuid REFERENCES users(id),
  applied_at timestamptz,
  photo_attachment_id uuid,
  remote_ack_by uuid REFERENCES users(id),
  remote_ack_at timestamptz,
  verified_by uuid REFERENCES users(id),
  verified_at timestamptz,
  verification_method text,
  verification_reading numeric,
  verification_unit text,
  verification_notes text,
  removed_by uuid REFERENCES users(id),
  removed_at timestamptz,
  removal_note text,
  control_room_ack_applied_by uuid REFERENCES users(id),
  control_room_ack_applied_at timestamptz,
  control_room_ack_removed_by uuid REFERENCES users(id),
  control_room_ack_removed_at timestamptz,
  plug_diameter_in numeric(6,3),
  plug_as_built jsonb,
  plug_warnings jsonb NOT NULL DEFAULT '[]'::jsonb,
  plug_warnings_ack_by uuid REFERENCES users(id),
  plug_warnings_ack_at timestamptz,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, permit_id, seq) DEFERRABLE INITIALLY DEFERRED,
  CHECK (point_id IS NOT NULL OR (temp_label IS NOT NULL AND temp_position IS NOT NULL)),
  CHECK (status = 'planned' OR applied_by IS NOT NULL),
  CHECK (status <> 'verified' OR (verified_by IS NOT NULL AND verified_by <> applied_by)),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, point_id) REFERENCES isolation_points (tenant_id, id),
  FOREIGN KEY (tenant_id, lock_id) REFERENCES locks (tenant_id, id),
  FOREIGN KEY (tenant_id, tag_id) REFERENCES tags (tenant_id, id)
);
-- A lock (and a tag) can be on at most one isolation at a time: the database says so, not only the code.
CREATE UNIQUE INDEX isolation_steps_one_lock ON isolation_steps (tenant_id, lock_id) WHERE lock_id IS NOT NULL AND status IN ('applied', 'verified');
CREATE UNIQUE INDEX isolation_steps_one_tag ON isolation_steps (tenant_id, tag_id) WHERE tag_id IS NOT NULL AND status IN ('applied', 'verified');
CREATE INDEX isolation_steps_permit_idx ON isolation_steps (tenant_id, permit_id, seq);
CREATE INDEX isolation_steps_live_idx ON isolation_steps (tenant_id, status) WHERE status IN ('applied', 'verified');
CREATE INDEX isolation_steps_point_idx ON isolation_steps (tenant_id, point_id) WHERE point_id IS NOT NULL;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS isolation_steps CASCADE`);
};
