import type { Migration } from '../migrator';

/**
 * What counts as an isolation, and proving it before work.
 *
 * - A line stop (stopple) or mechanical plug is its own kind of step with its own as-built record
 *   (device, size, set pressure or position), no longer a mud plug with weights. Steps still planned
 *   on a stopple or mechanical plug position become line stops; steps already made keep the record
 *   they were made with.
 * - A plan may declare a side of the work a dead end (no product source), with the reason.
 * - `isolation_provings`: the hold test that proves the isolated section dead (HSE HSG253): the
 *   gauge at a vent or drain of the plan read at the start and at the end, the site's limit and hold
 *   time as they were when the test started, and the result. At most one test of a permit runs at a
 *   time; a test is "proved" only after its full hold time.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE isolation_steps DROP CONSTRAINT isolation_steps_kind_check;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_kind_check CHECK (kind IN ('block_valve','vent','drain','plug','blind','isolator','line_stop'));
ALTER TABLE isolation_steps DROP CONSTRAINT isolation_steps_condition_check;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_condition_check
  CHECK (condition IN ('closed_locked_tagged','drained','vent_open','plug_built','blind_fitted','energy_isolated','line_stop_set'));
ALTER TABLE isolation_steps ADD COLUMN line_stop_as_built jsonb;
UPDATE isolation_steps s SET kind = 'line_stop', condition = 'line_stop_set', plug_diameter_in = NULL
FROM isolation_points ip
WHERE ip.tenant_id = s.tenant_id AND ip.id = s.point_id AND ip.kind = 'mechanical_plug_position' AND s.kind = 'plug' AND s.status = 'planned';
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_line_stop_record CHECK (kind = 'line_stop' OR line_stop_as_built IS NULL);

ALTER TABLE permits ADD COLUMN dead_end_upstream text, ADD COLUMN dead_end_downstream text;
ALTER TABLE permits ADD CONSTRAINT permits_dead_end_reasons CHECK (
  (dead_end_upstream IS NULL OR length(btrim(dead_end_upstream)) >= 3) AND (dead_end_downstream IS NULL OR length(btrim(dead_end_downstream)) >= 3)
);

CREATE TABLE isolation_provings (
  id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
  tenant_id uuid NOT NULL REFERENCES tenants(id),
  permit_id uuid NOT NULL,
  step_id uuid NOT NULL,
  unit text NOT NULL CHECK (unit IN ('psig','kPa','bar')),
  max_pressure numeric NOT NULL CHECK (max_pressure >= 0),
  max_pressure_unit text NOT NULL CHECK (max_pressure_unit IN ('psig','kPa','bar')),
  hold_minutes integer NOT NULL CHECK (hold_minutes > 0),
  start_reading numeric NOT NULL,
  started_at timestamptz NOT NULL,
  started_by uuid NOT NULL REFERENCES users(id),
  started_entered_late boolean NOT NULL DEFAULT false,
  end_reading numeric,
  ended_at timestamptz,
  ended_by uuid REFERENCES users(id),
  ended_entered_late boolean NOT NULL DEFAULT false,
  result text NOT NULL DEFAULT 'running' CHECK (result IN ('running','proved','failed')),
  failure text,
  notes text,
  created_at timestamptz NOT NULL DEFAULT now(),
  updated_at timestamptz NOT NULL DEFAULT now(),
  UNIQUE (tenant_id, id),
  FOREIGN KEY (tenant_id, permit_id) REFERENCES permits (tenant_id, id),
  FOREIGN KEY (tenant_id, step_id) REFERENCES isolation_steps (tenant_id, id),
  CHECK ((result = 'running') = (ended_at IS NULL)),
  CHECK ((ended_at IS NULL) = (end_reading IS NULL) AND (ended_at IS NULL) = (ended_by IS NULL)),
  CHECK (ended_at IS NULL OR ended_at >= started_at),
  CHECK (result <> 'proved' OR ended_at >= started_at + make_interval(mins => hold_minutes)),
  CHECK ((result = 'failed') = (failure IS NOT NULL))
);
CREATE UNIQUE INDEX isolation_provings_one_running ON isolation_provings (tenant_id, permit_id) WHERE result = 'running';
CREATE INDEX isolation_provings_permit_idx ON isolation_provings (tenant_id, permit_id, started_at);
SELECT hp_enable_tenant_rls('isolation_provings');
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TABLE IF EXISTS isolation_provings;
ALTER TABLE permits DROP CONSTRAINT IF EXISTS permits_dead_end_reasons;
ALTER TABLE permits DROP COLUMN IF EXISTS dead_end_upstream, DROP COLUMN IF EXISTS dead_end_downstream;
ALTER TABLE isolation_steps DROP CONSTRAINT IF EXISTS isolation_steps_line_stop_record;
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS line_stop_as_built;
UPDATE isolation_steps SET kind = 'plug', condition = 'plug_built' WHERE kind = 'line_stop';
ALTER TABLE isolation_steps DROP CONSTRAINT isolation_steps_condition_check;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_condition_check
  CHECK (condition IN ('closed_locked_tagged','drained','vent_open','plug_built','blind_fitted','energy_isolated'));
ALTER TABLE isolation_steps DROP CONSTRAINT isolation_steps_kind_check;
ALTER TABLE isolation_steps ADD CONSTRAINT isolation_steps_kind_check CHECK (kind IN ('block_valve','vent','drain','plug','blind','isolator'));
`);
};
