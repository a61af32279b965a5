import type { Migration } from '../migrator';

/**
 * The answer under an Idempotency-Key is now written in the request's own transaction, before the
 * commit (middleware/idempotency.ts): a write is kept only with its answer. So the answer must be
 * storable whatever it holds. jsonb refuses the character U+0000, which an answer may echo from a
 * broken upload (a CSV read back in a dry run); json keeps the text exactly as sent, and a replay is
 * the same answer.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`ALTER TABLE idempotency_keys ALTER COLUMN body TYPE json USING body::json;`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`ALTER TABLE idempotency_keys ALTER COLUMN body TYPE jsonb USING replace(body::text, '\\u0000', '\\ufffd')::jsonb;`);
};
