import { QueryTypes, type Sequelize } from 'sequelize';
import type { LockboxCrewMember, LockboxMember, PermitLockbox } from '@shared/types/crew';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import { readTenantSettings } from '@shared/schemas/tenant-settings.schema';
import { loadTenantSettings } from '../tenants/tenant-settings';

/** Inside withTenant: whether the tenant runs group lockout per person (a personal lock each on the permit's lockbox). */
export async function groupLockoutPerPerson(sequelize: Sequelize, tenantId: string) {
  return (await loadTenantSettings(sequelize, tenantId)).groupLockout === 'per_person';
}

/** Whether stored tenant settings say group lockout per person, read as every other setting is read. */
export const perPersonIn = (settings: unknown) => readTenantSettings(settings).groupLockout === 'per_person';

/** Inside withTenant: the people whose personal lock is on the permit's lockbox now, first on first. */
export async function crewOnLockbox(sequelize: Sequelize, tenantId: string, permitId: string): Promise<LockboxCrewMember<Date>[]> {
  return sequelize.query<LockboxCrewMember<Date>>(
    `SELECT c.user_id AS "userId", u.name, c.personal_lock_number AS "personalLockNumber", c.signed_on_at AS "signedOnAt"
     FROM permit_crew_members c JOIN users u ON u.id = c.user_id
     WHERE c.tenant_id = :tenantId AND c.permit_id = :permitId AND c.signed_off_at IS NULL ORDER BY c.signed_on_at, u.name`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
}

/** Inside withTenant: the permit's lockbox as the permit answer shows it, in one statement whatever the rows. */
export async function permitLockbox(sequelize: Sequelize, tenantId: string, permitId: string): Promise<PermitLockbox<Date>> {
  const [row] = await sequelize.query<{ settings: unknown; label: string | null; keys: string[]; crew: LockboxMember[] }>(
    `SELECT t.settings,
            (SELECT b.label FROM permit_lockboxes b WHERE b.tenant_id = t.id AND b.permit_id = :permitId) AS label,
            coalesce((SELECT array_agg(l.number ORDER BY s.applied_seq NULLS LAST, l.number) FROM isolation_steps s JOIN locks l ON l.tenant_id = s.tenant_id AND l.id = s.lock_id
                      WHERE s.tenant_id = t.id AND s.permit_id = :permitId AND s.status IN (:inPlace)), '{}') AS keys,
            coalesce((SELECT json_agg(json_build_object('userId', c.user_id, 'name', u.name, 'personalLockNumber', c.personal_lock_number, 'signedOnAt', c.signed_on_at,
                                                        'exception', CASE WHEN e.id IS NULL THEN NULL ELSE json_build_object('recordedAt', e.recorded_at, 'authoriserId', e.authoriser_user_id, 'authoriserName', ea.name) END)
                                      ORDER BY c.signed_on_at, u.name)
                      FROM permit_crew_members c JOIN users u ON u.id = c.user_id
                      LEFT JOIN lock_removal_exceptions e ON e.tenant_id = c.tenant_id AND e.crew_member_id = c.id LEFT JOIN users ea ON ea.id = e.authoriser_user_id
                      WHERE c.tenant_id = t.id AND c.permit_id = :permitId AND c.signed_off_at IS NULL), '[]') AS crew
     FROM tenants t WHERE t.id = :tenantId`,
    { replacements: { tenantId, permitId, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
  );
  if (!row || !perPersonIn(row.settings)) return { perPerson: false, label: null, keys: [], crewOn: [] };
  const crewOn = row.crew.map((c) => ({ ...c, signedOnAt: new Date(c.signedOnAt), exception: c.exception && { ...c.exception, recordedAt: new Date(c.exception.recordedAt) } }));
  return { perPerson: true, label: row.label, keys: row.keys, crewOn };
}
