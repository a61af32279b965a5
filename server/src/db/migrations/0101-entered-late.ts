import type { Migration } from '../migrator';

// Observations written down after the fact (a gas test, a timed check, an isolation applied earlier
// than it was recorded) are marked, so the record shows which times were typed in later.
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE gas_tests ADD COLUMN entered_late boolean NOT NULL DEFAULT false;
ALTER TABLE permit_checks ADD COLUMN entered_late boolean NOT NULL DEFAULT false;
ALTER TABLE isolation_steps ADD COLUMN applied_entered_late boolean NOT NULL DEFAULT false;
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE isolation_steps DROP COLUMN IF EXISTS applied_entered_late;
ALTER TABLE permit_checks DROP COLUMN IF EXISTS entered_late;
ALTER TABLE gas_tests DROP COLUMN IF EXISTS entered_late;
`);
};
