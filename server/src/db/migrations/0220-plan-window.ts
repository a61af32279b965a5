import type { Migration } from '../migrator';

/**
 * The week ahead and the management figures.
 *
 * The week ahead reads the permits whose validity window meets a few weeks around today. Ordered by
 * the window's end, the permits that ended before the view starts (most of a long-running tenant's
 * history) are skipped by the index; the start and the columns the overlap check compares come from
 * the index too.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE INDEX IF NOT EXISTS permits_plan_window_idx ON permits (tenant_id, valid_to) INCLUDE (valid_from, state, pipeline_id, from_position, to_position);
-- The figures look up the permit state changes of a period (approved, work started, returned to
-- service, suspended) among every other audit event: only the changes of state are indexed.
CREATE INDEX IF NOT EXISTS audit_events_state_change_idx ON audit_events (tenant_id, to_state, occurred_at) INCLUDE (permit_id, actor_role) WHERE to_state IS NOT NULL;
-- Qualifications by expiry date for the "expiring soon" figures.
CREATE INDEX IF NOT EXISTS qualifications_expiry_idx ON qualifications (tenant_id, expires_on) INCLUDE (kind);
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP INDEX IF EXISTS permits_plan_window_idx, audit_events_state_change_idx, qualifications_expiry_idx;`);
};
