import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { siteDay } from '@shared/time/zone';

/** A qualification is in date from its issue day to its expiry day inclusive, both read as site days. */
export const inDateOn = (q: { issuedOn: string | null; expiresOn: string | null }, day: string) => q.issuedOn !== null && q.expiresOn !== null && q.issuedOn <= day && day <= q.expiresOn;

/**
 * Whether the person holds an in-date qualification of the kind on the site day of `at` (the
 * tenant's time zone, not the UTC date), and which day that is. One query: the tenant's zone comes along.
 */
export async function qualificationOnSiteDay(sequelize: Sequelize, tenantId: string, userId: string, kind: string, at: Date, transaction?: Transaction) {
  const rows = await sequelize.query<{ timeZone: string; issuedOn: string | null; expiresOn: string | null }>(
    `SELECT t.time_zone AS "timeZone", to_char(q.issued_on, 'YYYY-MM-DD') AS "issuedOn", to_char(q.expires_on, 'YYYY-MM-DD') AS "expiresOn"
     FROM tenants t LEFT JOIN qualifications q ON q.tenant_id = t.id AND q.user_id = :userId AND q.kind = :kind
     WHERE t.id = :tenantId`,
    { replacements: { tenantId, userId, kind }, type: QueryTypes.SELECT, transaction },
  );
  const day = siteDay(at, rows[0]?.timeZone ?? 'UTC');
  return { held: rows.some((q) => inDateOn(q, day)), day };
}

/** True when the person holds an in-date qualification of the kind on the site day of `at`, in this tenant. */
export async function holdsQualification(sequelize: Sequelize, tenantId: string, userId: string, kind: string, at: Date, transaction?: Transaction) {
  return (await qualificationOnSiteDay(sequelize, tenantId, userId, kind, at, transaction)).held;
}
