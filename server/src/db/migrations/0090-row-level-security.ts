import type { Migration } from '../migrator';

/**
 * Row-level security on every tenant-owned table, keyed on the per-transaction setting app.tenant_id
 * that withTenant() sets. The application connects as a role that owns nothing, so the policies bind
 * it; migrations and the demo seed run as the owner. Tables without tenant data (users, sessions,
 * tokens, the mail outbox the sender reads across tenants) are listed and left out on purpose.
 * The policies are (re)applied to any table with a tenant_id column, so this migration also covers
 * tables added before it; later migrations call hp_enable_tenant_rls('table') for their own.
 */
export const notTenantScoped = ['mail_outbox', 'auth_tokens'];

export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE FUNCTION hp_current_tenant() RETURNS uuid LANGUAGE sql STABLE AS $$
  SELECT nullif(current_setting('app.tenant_id', true), '')::uuid
$$;

CREATE FUNCTION hp_enable_tenant_rls(tbl regclass) RETURNS void LANGUAGE plpgsql AS $$
DECLARE key text := CASE WHEN tbl = 'tenants'::regclass THEN 'id' ELSE 'tenant_id' END;
BEGIN
  EXECUTE format('ALTER TABLE %s ENABLE ROW LEVEL SECURITY', tbl);
  EXECUTE format('DROP POLICY IF EXISTS tenant_isolation ON %s', tbl);
  EXECUTE format('CREATE POLICY tenant_isolation ON %s USING (%I = hp_current_tenant()) WITH CHECK (%I = hp_current_tenant())', tbl, key, key);
END $$;

-- Identity look-ups that must cross tenants (who is this user, which tenants may they switch to)
-- go through this one function, which runs as the owner and returns only the caller's own rows.
CREATE FUNCTION hp_memberships_of(p_user uuid)
RETURNS TABLE (id uuid, tenant_id uuid, tenant_name text, organisation_id uuid, organisation_name text, organisation_kind text, role text)
LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public AS $$
  SELECT m.id, m.tenant_id, t.name, m.organisation_id, o.name, o.kind, m.role
  FROM memberships m JOIN tenants t ON t.id = m.tenant_id JOIN organisations o ON o.id = m.organisation_id
  WHERE m.user_id = p_user ORDER BY t.name, o.name, m.role
$$;

-- The scheduler visits each tenant in turn; it needs their ids and nothing else.
CREATE FUNCTION hp_tenant_ids() RETURNS SETOF uuid LANGUAGE sql STABLE SECURITY DEFINER SET search_path = public AS $$
  SELECT id FROM tenants ORDER BY id
$$;

SELECT hp_enable_tenant_rls('tenants');
SELECT hp_enable_tenant_rls(format('%I', c.table_name)::regclass)
FROM information_schema.columns c JOIN information_schema.tables t ON t.table_schema = c.table_schema AND t.table_name = c.table_name
WHERE c.table_schema = 'public' AND c.column_name = 'tenant_id' AND t.table_type = 'BASE TABLE'
  AND c.table_name NOT IN (${notTenantScoped.map((n) => `'${n}'`).join(', ')});
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DO $$ DECLARE r record; BEGIN
  FOR r IN SELECT schemaname, tablename FROM pg_policies WHERE policyname = 'tenant_isolation' LOOP
    EXECUTE format('DROP POLICY tenant_isolation ON %I.%I', r.schemaname, r.tablename);
    EXECUTE format('ALTER TABLE %I.%I DISABLE ROW LEVEL SECURITY', r.schemaname, r.tablename);
  END LOOP;
END $$;
DROP FUNCTION IF EXISTS hp_tenant_ids(), hp_memberships_of(uuid), hp_enable_tenant_rls(regclass), hp_current_tenant();`);
};
