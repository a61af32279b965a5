import type { Migration } from '../migrator';

/**
 * Limits every server process shares. Kept here, not in process memory, so N processes behind a
 * balancer do not give an address, an account or a signer N times the attempts.
 *
 * `rate_limits` is the table of rate-limiter-flexible's PostgreSQL store (the per-address limit on
 * sign-in and the token routes), in exactly the shape that store would create; it is made here
 * because the server's role owns nothing and may not create tables (the store runs with
 * `tableCreated: true`). Keys are hashes, not addresses.
 *
 * `auth_attempts` counts failed sign-ins per account and wrong signature passwords per person. Its
 * times come from the server's clock (tests move it), hence a table of our own. Keys are hashes of
 * the account address or the person's id, never the address itself.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE TABLE rate_limits (
  key varchar(255) PRIMARY KEY,
  points integer NOT NULL DEFAULT 0,
  expire bigint
);

CREATE TABLE auth_attempts (
  key text PRIMARY KEY CHECK (length(key) <= 100),
  failures integer NOT NULL CHECK (failures > 0),
  first_at timestamptz NOT NULL,
  last_at timestamptz NOT NULL
);
CREATE INDEX auth_attempts_last_at_idx ON auth_attempts (last_at);
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TABLE IF EXISTS auth_attempts; DROP TABLE IF EXISTS rate_limits;`);
};
