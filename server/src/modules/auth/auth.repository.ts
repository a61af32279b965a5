import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import type { Actor } from '@shared/abilities/define-ability';
import type { Role, OrganisationKind } from '@shared/abilities/roles';
import type { MeResponse } from '@shared/schemas/auth.schema';
import { withTenant } from '../../db/sequelize';

export interface UserRow {
  id: string;
  email: string;
  name: string;
  password_hash: string | null;
  disabled_at: Date | null;
}

export interface MembershipView {
  id: string;
  tenantId: string;
  tenantName: string;
  organisationId: string;
  organisationName: string;
  organisationKind: OrganisationKind;
  role: Role;
}

export async function findUserByEmail(sequelize: Sequelize, email: string, transaction?: Transaction) {
  const rows = await sequelize.query<UserRow>(`SELECT id, email, name, password_hash, disabled_at FROM users WHERE lower(email) = lower(:email)`, {
    replacements: { email },
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows[0] ?? null;
}

/** Every membership of the user across tenants, through the one owner-run function that may cross them. */
export async function membershipsOf(sequelize: Sequelize, userId: string): Promise<MembershipView[]> {
  return sequelize.query<MembershipView>(
    `SELECT id, tenant_id AS "tenantId", tenant_name AS "tenantName", organisation_id AS "organisationId",
            organisation_name AS "organisationName", organisation_kind AS "organisationKind", role
     FROM hp_memberships_of(:userId)`,
    { replacements: { userId }, type: QueryTypes.SELECT },
  );
}

export async function loadActor(sequelize: Sequelize, userId: string, tenantId: string | null) {
  const users = await sequelize.query<UserRow>(`SELECT id, email, name, password_hash, disabled_at FROM users WHERE id = :userId`, {
    replacements: { userId },
    type: QueryTypes.SELECT,
  });
  const user = users[0];
  if (!user || user.disabled_at) return null;
  const memberships = await membershipsOf(sequelize, userId);
  const active = tenantId ? memberships.filter((m) => m.tenantId === tenantId) : [];
  const actor: Actor | null = active.length
    ? { userId, tenantId: tenantId!, memberships: active.map((m) => ({ role: m.role, organisationId: m.organisationId, organisationKind: m.organisationKind })) }
    : null;
  return { user: { id: user.id, email: user.email, name: user.name }, memberships, actor };
}

export async function tenantSummary(sequelize: Sequelize, tenantId: string): Promise<MeResponse['activeTenant']> {
  const rows = await withTenant(sequelize, tenantId, () => sequelize.query<{ id: string; name: string; timeZone: string; locationUnit: 'mi' | 'km' }>(
    `SELECT id, name, time_zone AS "timeZone", location_unit AS "locationUnit" FROM tenants WHERE id = :tenantId`,
    { replacements: { tenantId }, type: QueryTypes.SELECT },
  ));
  return rows[0] ?? null;
}
