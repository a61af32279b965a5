import type { Migration } from '../migrator';

/**
 * An Idempotency-Key must cover what a route reads after the JSON parser: the file of a multipart
 * upload or a CSV body. request_hash is taken before that body is read; body_hash is added by the
 * route once it has read it (the file's SHA-256 among it), so a retry with another file is refused.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`ALTER TABLE idempotency_keys ADD COLUMN body_hash text;`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`ALTER TABLE idempotency_keys DROP COLUMN IF EXISTS body_hash;`);
};
