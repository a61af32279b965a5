import type { Migration } from '../migrator';

/**
 * Every audit event is announced on the change feed (`holdpoint_changes`) when its transaction
 * commits, with its tenant and permit. Open screens follow a permit through its audit events (the
 * live stream replays them by sequence number); before this, only the services that called
 * pg_notify themselves woke the stream, so an edit, new gas limits or an attachment reached an open
 * screen only with the tenant's next announced change. PostgreSQL folds identical notifications of
 * one transaction into one, so a transaction with many events on one permit announces it once.
 */
export const up: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`
CREATE FUNCTION hp_audit_announce() RETURNS trigger
LANGUAGE plpgsql SET search_path = public AS $$
BEGIN
  PERFORM pg_notify('holdpoint_changes', json_build_object('tenantId', NEW.tenant_id, 'kind', 'audit', 'permitId', NEW.permit_id)::text);
  RETURN NULL;
END $$;

CREATE TRIGGER audit_events_announce AFTER INSERT ON audit_events FOR EACH ROW EXECUTE FUNCTION hp_audit_announce();
`);
};

export const down: Migration = async ({ context: { sequelize } }) => {
  await sequelize.query(`DROP TRIGGER IF EXISTS audit_events_announce ON audit_events; DROP FUNCTION IF EXISTS hp_audit_announce();`);
};
