import type { Migration } from '../migrator';

/**
 * `users.access_version`: moves whenever what a signed-in person may do could have changed (a
 * membership added, changed or removed; the account renamed or disabled; their tenant or
 * organisation renamed). Each server process keeps a person's memberships and rules in memory for a
 * short while; the session read returns this number in the same statement, so a kept copy from
 * before a change is never used, whichever process made the change. The same triggers announce it
 * on the change feed (kind "access"), so every process drops its copy at once.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
ALTER TABLE users ADD COLUMN access_version bigint NOT NULL DEFAULT 0;

-- Runs as the owner: the app role may change memberships but has no business writing users rows.
CREATE FUNCTION hp_access_changed(p_users uuid[]) RETURNS void
LANGUAGE plpgsql SECURITY DEFINER SET search_path = public AS $$
DECLARE u uuid;
BEGIN
  IF p_users IS NULL OR cardinality(p_users) = 0 THEN RETURN; END IF;
  UPDATE users SET access_version = access_version + 1 WHERE id = ANY (p_users);
  FOREACH u IN ARRAY p_users LOOP
    -- No tenant in the message: the board streams pass on their tenant's changes, and this is not one.
    PERFORM pg_notify('holdpoint_changes', json_build_object('tenantId', NULL, 'kind', 'access', 'userId', u)::text);
  END LOOP;
END $$;

CREATE FUNCTION hp_memberships_access_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    PERFORM hp_access_changed(ARRAY[OLD.user_id]);
    RETURN OLD;
  END IF;
  IF TG_OP = 'UPDATE' THEN
    IF (OLD.role, OLD.organisation_id, OLD.user_id, OLD.tenant_id) IS NOT DISTINCT FROM (NEW.role, NEW.organisation_id, NEW.user_id, NEW.tenant_id) THEN RETURN NEW; END IF;
    IF OLD.user_id <> NEW.user_id THEN PERFORM hp_access_changed(ARRAY[OLD.user_id]); END IF;
  END IF;
  PERFORM hp_access_changed(ARRAY[NEW.user_id]);
  RETURN NEW;
END $$;
CREATE TRIGGER memberships_access_changed AFTER INSERT OR UPDATE OR DELETE ON memberships
  FOR EACH ROW EXECUTE FUNCTION hp_memberships_access_changed();

CREATE FUNCTION hp_users_access_changed() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF (OLD.email, OLD.name, OLD.disabled_at) IS DISTINCT FROM (NEW.email, NEW.name, NEW.disabled_at)
     AND OLD.access_version = NEW.access_version THEN
    NEW.access_version := OLD.access_version + 1;
    PERFORM pg_notify('holdpoint_changes', json_build_object('tenantId', NULL, 'kind', 'access', 'userId', NEW.id)::text);
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER users_access_changed BEFORE UPDATE ON users
  FOR EACH ROW EXECUTE FUNCTION hp_users_access_changed();

-- Names shown with each membership (the tenant's, the organisation's, the tenant's zone and unit).
CREATE FUNCTION hp_tenants_access_changed() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER SET search_path = public AS $$
BEGIN
  IF (OLD.name, OLD.time_zone, OLD.location_unit) IS DISTINCT FROM (NEW.name, NEW.time_zone, NEW.location_unit) THEN
    PERFORM hp_access_changed(ARRAY(SELECT DISTINCT user_id FROM memberships WHERE tenant_id = NEW.id));
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER tenants_access_changed AFTER UPDATE ON tenants
  FOR EACH ROW EXECUTE FUNCTION hp_tenants_access_changed();

CREATE FUNCTION hp_organisations_access_changed() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER SET search_path = public AS $$
BEGIN
  IF (OLD.name, OLD.kind) IS DISTINCT FROM (NEW.name, NEW.kind) THEN
    PERFORM hp_access_changed(ARRAY(SELECT DISTINCT user_id FROM memberships WHERE tenant_id = NEW.tenant_id AND organisation_id = NEW.id));
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER organisations_access_changed AFTER UPDATE ON organisations
  FOR EACH ROW EXECUTE FUNCTION hp_organisations_access_changed();
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
DROP TRIGGER IF EXISTS organisations_access_changed ON organisations;
DROP TRIGGER IF EXISTS tenants_access_changed ON tenants;
DROP TRIGGER IF EXISTS users_access_changed ON users;
DROP TRIGGER IF EXISTS memberships_access_changed ON memberships;
DROP FUNCTION IF EXISTS hp_organisations_access_changed(), hp_tenants_access_changed(), hp_users_access_changed(), hp_memberships_access_changed(), hp_access_changed(uuid[]);
ALTER TABLE users DROP COLUMN IF EXISTS access_version;`);
};
