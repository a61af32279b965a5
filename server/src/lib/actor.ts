import { QueryTypes, type Sequelize } from 'sequelize';
import type { Actor } from '@shared/abilities/define-ability';
import type { Role, OrganisationKind } from '@shared/abilities/roles';

export interface MembershipView {
  id: string;
  tenantId: string;
  tenantName: string;
  organisationId: string;
  organisationName: string;
  organisationKind: OrganisationKind;
  role: Role;
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

/**
 * The signed-in person, all their memberships, and the actor their rules are built from in the given
 * tenant (null without a role there). Null when the account is gone or disabled.
 */
export async function loadActor(sequelize: Sequelize, userId: string, tenantId: string | null) {
  const users = await sequelize.query<{ id: string; email: string; name: string; disabled_at: Date | null }>(
    `SELECT id, email, name, disabled_at FROM users WHERE id = :userId`,
    { replacements: { userId }, type: QueryTypes.SELECT },
  );
  const user = users[0];
  if (!user || user.disabled_at) return null;
  const memberships = await membershipsOf(sequelize, userId);
  const active = tenantId ? memberships.filter((m) => m.tenantId === tenantId) : [];
  const actor: Actor | null = active.length
    ? { userId, tenantId: tenantId!, memberships: active.map((m) => ({ role: m.role, organisationId: m.organisationId, organisationKind: m.organisationKind })) }
    : null;
  return { user: { id: user.id, email: user.email, name: user.name }, memberships, actor };
}
