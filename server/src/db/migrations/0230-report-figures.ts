import type { Migration } from '../migrator';

/**
 * The report page's figures over time.
 *
 * Permits by state over time reads every state change of the tenant's permits in permit and time
 * order (each change takes one from the state before it); the on-time figures look up the state a
 * permit stood in at a due time and whether it left it before the record came. Only the permits'
 * own state changes are indexed, in that order, with the state: read from the index alone, without
 * a sort, and an isolation certificate's state changes stay out.
 * Fire-watch closing checks fall due a watch's length after hot work stopped: the few permits whose
 * hot work stopped in the period are found by that time.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE INDEX IF NOT EXISTS audit_events_permit_states_idx ON audit_events (tenant_id, permit_id, occurred_at, seq) INCLUDE (to_state)
  WHERE entity_type = 'permit' AND to_state IS NOT NULL;
CREATE INDEX IF NOT EXISTS permits_hot_work_ended_idx ON permits (tenant_id, hot_work_ended_at) INCLUDE (id, fire_watch_minutes, kinds)
  WHERE hot_work_ended_at IS NOT NULL;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP INDEX IF EXISTS audit_events_permit_states_idx, permits_hot_work_ended_idx;`);
};
