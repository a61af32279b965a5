import type { Migration } from '../migrator';

// The asset register: pipelines, their sites, the points where an isolation can be made, and the
// lock and tag stock. Positions are numeric(9,3) in the tenant's location unit (tenants.location_unit);
// pipelines do not carry a unit of their own, so one tenant can never mix miles and kilometres.
// Later tables (permits, isolation steps) point here through (tenant_id, id).
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE pipelines (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  code text NOT NULL,
  name text NOT NULL,
  product text NOT NULL CHECK (product IN ('refined_products', 'crude_oil', 'natural_gas', 'ngl', 'co2', 'water', 'other')),
  nps numeric(6,3) NOT NULL CHECK (nps > 0),
  schedule text CHECK (schedule IN ('STD', '40', 'XS', '80')),
  wall_thickness_in numeric(6,3) CHECK (wall_thickness_in > 0),
  inside_diameter_in numeric(7,3) NOT NULL CHECK (inside_diameter_in > 0),
  inside_diameter_source text NOT NULL CHECK (inside_diameter_source IN ('schedule', 'wall', 'explicit')),
  mop_psig numeric(8,1) NOT NULL CHECK (mop_psig >= 0),
  start_position numeric(9,3) NOT NULL,
  end_position numeric(9,3) NOT NULL,
  notes text,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, code),
  CHECK (end_position > start_position)
);
CREATE INDEX pipelines_name_idx ON pipelines (tenant_id, name);

CREATE TABLE pipeline_sites (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  pipeline_id uuid NOT NULL,
  name text NOT NULL,
  position numeric(9,3) NOT NULL,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, pipeline_id) REFERENCES pipelines (tenant_id, id)
);
CREATE UNIQUE INDEX pipeline_sites_name_key ON pipeline_sites (tenant_id, pipeline_id, lower(name));
CREATE INDEX pipeline_sites_position_idx ON pipeline_sites (tenant_id, pipeline_id, position);

-- Valve details exist exactly when the point is a block valve; an isolator always says what it isolates.
CREATE TABLE isolation_points (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  pipeline_id uuid NOT NULL,
  tag_code text NOT NULL,
  kind text NOT NULL CHECK (kind IN ('block_valve', 'vent', 'drain', 'plug_position', 'blind_position', 'mechanical_plug_position', 'isolator')),
  position numeric(9,3) NOT NULL,
  description text,
  valve_type text CHECK (valve_type IN ('gate', 'ball', 'plug', 'check')),
  normal_position text CHECK (normal_position IN ('open', 'closed')),
  remotely_operable boolean,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, tag_code),
  FOREIGN KEY (tenant_id, pipeline_id) REFERENCES pipelines (tenant_id, id),
  CHECK (
    (kind = 'block_valve' AND valve_type IS NOT NULL AND normal_position IS NOT NULL AND remotely_operable IS NOT NULL)
    OR (kind <> 'block_valve' AND valve_type IS NULL AND normal_position IS NULL AND remotely_operable IS NULL)
  ),
  CHECK (kind <> 'isolator' OR coalesce(btrim(description), '') <> '')
);
CREATE INDEX isolation_points_position_idx ON isolation_points (tenant_id, pipeline_id, position);
CREATE INDEX isolation_points_kind_idx ON isolation_points (tenant_id, kind);

-- Numbered padlocks and danger tags. 'applied' is set only by the isolation work, which also owns
-- the rule that one lock (or tag) is on at most one isolation at a time.
CREATE TABLE locks (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  number text NOT NULL,
  state text NOT NULL DEFAULT 'in_store' CHECK (state IN ('in_store', 'applied', 'lost', 'retired')),
  holder_user_id uuid REFERENCES users(id),
  notes text,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, number)
);
CREATE INDEX locks_state_idx ON locks (tenant_id, state);

CREATE TABLE tags (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  number text NOT NULL,
  state text NOT NULL DEFAULT 'in_store' CHECK (state IN ('in_store', 'applied', 'lost', 'retired')),
  holder_user_id uuid REFERENCES users(id),
  notes text,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  UNIQUE (tenant_id, number)
);
CREATE INDEX tags_state_idx ON tags (tenant_id, state);
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS tags, locks, isolation_points, pipeline_sites, pipelines CASCADE`);
};
