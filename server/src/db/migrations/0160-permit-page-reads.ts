import type { Migration } from '../migrator';

/**
 * The permit page on the scale dataset (docs/performance.md, "What changed"):
 * - the overlap warning looks for other permits on the same line, from sent for approval to work
 *   complete, whose range meets this one. The plain pipeline index holds every permit ever written on
 *   the line (hundreds of closed ones), each visited in the table to read its state and range; this
 *   partial index holds only the permits that can overlap, with the range, number and id in the index,
 *   so the count and the first ten are read from the index alone and only those ten visit the table.
 *   The state list is the one of `workOverlapStates` (shared/permit/states.ts) as it stands today: the
 *   query's list must imply it, so a change to that list needs a new migration (the plan falls back to
 *   the pipeline index, still correct, only slower).
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE INDEX permits_work_overlap_idx ON permits (tenant_id, pipeline_id, from_position) INCLUDE (to_position, number, id)
  WHERE state IN ('requested', 'approved', 'accepted', 'isolated', 'live', 'suspended', 'work_complete');
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP INDEX IF EXISTS permits_work_overlap_idx;`);
};
