import type { Migration } from '../migrator';

/**
 * The owner-run (SECURITY DEFINER) functions: each does one narrow cross-tenant thing as the owner, so
 * who may call it matters.
 *
 * - PostgreSQL lets everyone (PUBLIC) execute a new function. Now only the server's group role hp_app
 *   may execute the ones the server calls itself; the rest (the access-version bump and the triggers
 *   that call it) only the owner, so the server cannot bump any account's access version or send
 *   access notices at will. The membership trigger, which the server fires by changing memberships,
 *   now runs as the owner to make that bump.
 * - Their search path was `public` alone, which leaves the session's temporary schema searched first:
 *   a temporary table named like one of theirs (memberships, auth_tokens …) would have been read in
 *   its place, as the owner. It is now `pg_catalog, public, pg_temp`, the temporary schema last.
 */
const appCalls = [
  'hp_memberships_of(uuid)',
  'hp_tenant_ids()',
  'hp_outbox_claim()',
  'hp_outbox_sent(bigint)',
  'hp_outbox_failed(bigint, integer, text, boolean, integer)',
  'hp_invitation_tenant(text)',
  'hp_request_password_reset(text, text, timestamptz, timestamptz, text, text, integer, integer)',
  'hp_claim_reset_token(text, timestamptz)',
];
const ownerOnly = ['hp_access_changed(uuid[])', 'hp_memberships_access_changed()', 'hp_tenants_access_changed()', 'hp_organisations_access_changed()'];
const all = [...appCalls, ...ownerOnly];

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER FUNCTION hp_memberships_access_changed() SECURITY DEFINER;
${all.map((f) => `ALTER FUNCTION ${f} SET search_path = pg_catalog, public, pg_temp;`).join('\n')}
${all.map((f) => `REVOKE ALL ON FUNCTION ${f} FROM PUBLIC;`).join('\n')}
DO $$ BEGIN
  IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'hp_app') THEN
    ${appCalls.map((f) => `GRANT EXECUTE ON FUNCTION ${f} TO hp_app;`).join('\n    ')}
  END IF;
END $$;`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DO $$ BEGIN
  IF EXISTS (SELECT 1 FROM pg_roles WHERE rolname = 'hp_app') THEN
    ${appCalls.map((f) => `REVOKE EXECUTE ON FUNCTION ${f} FROM hp_app;`).join('\n    ')}
  END IF;
END $$;
${all.map((f) => `GRANT EXECUTE ON FUNCTION ${f} TO PUBLIC;`).join('\n')}
${all.map((f) => `ALTER FUNCTION ${f} SET search_path = public;`).join('\n')}
ALTER FUNCTION hp_memberships_access_changed() SECURITY INVOKER;
ALTER FUNCTION hp_memberships_access_changed() RESET search_path;`);
};
