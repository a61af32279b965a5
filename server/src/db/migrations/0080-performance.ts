import type { Migration } from '../migrator';

/**
 * Indexes the scale benchmark called for (docs/performance.md has the numbers):
 * - the live board looks up, for every isolation in place, the other permits holding the same point;
 *   the plain point index also holds every removed step of every finished permit;
 * - the latest passing gas test of a permit (board, permit list and permit page): a partial index
 *   answers it from the index alone instead of visiting every reading's row to check its verdict;
 * - the permit list pages through the ids in sort order before it joins anything, which needs the
 *   id in the index after the sort key (it replaces permits_list_idx, whose columns it starts with);
 * - the list's default order (last changed first).
 * And no JIT compilation: its start-up cost (seconds, seen on the board query) dwarfs queries that
 * run in milliseconds, and the planner's estimates for the board's CTEs made it kick in.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE INDEX isolation_steps_live_point_idx ON isolation_steps (tenant_id, point_id) WHERE status IN ('applied', 'verified') AND point_id IS NOT NULL;
CREATE INDEX gas_tests_last_pass_idx ON gas_tests (tenant_id, permit_id, tested_at DESC) WHERE verdict = 'pass';
CREATE INDEX permits_state_valid_from_idx ON permits (tenant_id, state, valid_from DESC, id);
DROP INDEX IF EXISTS permits_list_idx;
CREATE INDEX permits_updated_idx ON permits (tenant_id, updated_at DESC, id);
DO $$ BEGIN EXECUTE format('ALTER DATABASE %I SET jit = off', current_database()); END $$;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DO $$ BEGIN EXECUTE format('ALTER DATABASE %I RESET jit', current_database()); END $$;
DROP INDEX IF EXISTS permits_updated_idx;
CREATE INDEX IF NOT EXISTS permits_list_idx ON permits (tenant_id, state, valid_from DESC);
DROP INDEX IF EXISTS permits_state_valid_from_idx;
DROP INDEX IF EXISTS gas_tests_last_pass_idx;
DROP INDEX IF EXISTS isolation_steps_live_point_idx;
`);
};
