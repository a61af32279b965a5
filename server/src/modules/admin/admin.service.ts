// Tenant administration: organisations, people and their roles, qualifications, invitations.
// Each exported function checks the caller's rights and runs in one tenant transaction.
import { QueryTypes, UniqueConstraintError, type Sequelize } from 'sequelize';
import { subject } from '@casl/ability';
import type { InviteInput, OrganisationInput, QualificationInput, UsersQuery } from '@shared/schemas/auth.schema';
import { roleLabels, type Role } from '@shared/abilities/roles';
import type { Page, PageQuery } from '@shared/schemas/common.schema';
import type { MembershipRow, OrganisationRow, QualificationRow, UserRow } from '@shared/types/admin';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { appendAudit } from '../audit/audit.service';
import { invite } from '../auth/auth.service';
import type { CallerContext } from '../../lib/caller';

async function organisationsPage(sequelize: Sequelize, tenantId: string, page: number, pageSize: number): Promise<Page<OrganisationRow>> {
  const items = await sequelize.query<OrganisationRow & { total: number }>(
    `SELECT o.id, o.tenant_id AS "tenantId", o.name, o.kind,
            (SELECT count(DISTINCT user_id) FROM memberships m WHERE m.organisation_id = o.id)::int AS members,
            count(*) OVER ()::int AS total
     FROM organisations o WHERE o.tenant_id = :tenantId ORDER BY o.kind DESC, o.name LIMIT :limit OFFSET :offset`,
    { replacements: { tenantId, limit: pageSize, offset: (page - 1) * pageSize }, type: QueryTypes.SELECT },
  );
  return { items: items.map(({ total: _t, ...r }) => r), total: items[0]?.total ?? (await countOrgs(sequelize, tenantId)), page, pageSize };
}

async function countOrgs(sequelize: Sequelize, tenantId: string) {
  const [row] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM organisations WHERE tenant_id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  return row.n;
}

export async function listOrganisations(deps: AppDeps, caller: CallerContext, q: PageQuery) {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'Organisation', { tenantId }, 'organisations');
  return withTenant(deps.sequelize, tenantId, () => organisationsPage(deps.sequelize, tenantId, q.page, q.pageSize));
}

export async function createOrganisation(deps: AppDeps, caller: CallerContext, input: OrganisationInput): Promise<OrganisationRow> {
  const { tenantId } = caller.actor;
  const { sequelize } = deps;
  authorizeType(caller.ability, 'create', 'Organisation', { tenantId }, 'organisations');
  return withTenant(sequelize, tenantId, async () => {
    const exists = await sequelize.query(`SELECT 1 FROM organisations WHERE tenant_id = :tenantId AND lower(name) = lower(:name)`, { replacements: { tenantId, name: input.name }, type: QueryTypes.SELECT });
    if (exists.length) throw AppError.conflict(`An organisation called "${input.name}" already exists.`);
    const [row] = await sequelize.query<{ id: string }>(`INSERT INTO organisations (tenant_id, name, kind) VALUES (:tenantId, :name, :kind) RETURNING id`, {
      replacements: { tenantId, ...input },
      type: QueryTypes.SELECT,
    });
    return { id: row.id, tenantId, ...input, members: 0 };
  });
}

const userSort: Record<UsersQuery['sort'], string> = { name: 'u.name', email: 'lower(u.email)', role: 'm.role', organisation: 'o.name' };

/** One row per membership so the admin sees every role a person holds. */
async function usersPage(sequelize: Sequelize, tenantId: string, q: UsersQuery, onlyOrganisationId?: string): Promise<Page<UserRow>> {
  const where = ['m.tenant_id = :tenantId'];
  const replacements: Record<string, unknown> = { tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.q) {
    where.push(`(u.name ILIKE :q OR u.email ILIKE :q)`);
    replacements.q = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
  }
  if (q.role) {
    where.push('m.role = :role');
    replacements.role = q.role;
  }
  const org = onlyOrganisationId ?? q.organisationId;
  if (org) {
    where.push('m.organisation_id = :org');
    replacements.org = org;
  }
  const sql = `FROM memberships m JOIN users u ON u.id = m.user_id JOIN organisations o ON o.id = m.organisation_id WHERE ${where.join(' AND ')}`;
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n ${sql}`, { replacements, type: QueryTypes.SELECT });
  const items = await sequelize.query<UserRow>(
    `SELECT m.id AS "membershipId", u.id AS "userId", u.name, u.email, m.role, o.id AS "organisationId", o.name AS "organisationName", o.kind AS "organisationKind"
     ${sql} ORDER BY ${userSort[q.sort]} ${q.dir === 'desc' ? 'DESC' : 'ASC'}, m.id LIMIT :limit OFFSET :offset`,
    { replacements, type: QueryTypes.SELECT },
  );
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

export async function listUsers(deps: AppDeps, caller: CallerContext, q: UsersQuery) {
  const { actor, ability } = caller;
  const { tenantId } = actor;
  if (ability.can('read', subject('User', { tenantId }))) return withTenant(deps.sequelize, tenantId, () => usersPage(deps.sequelize, tenantId, q));
  // A contractor lead sees the members of their own organisation only.
  const own = actor.memberships.find((m) => ability.can('read', subject('Membership', { tenantId, organisationId: m.organisationId })));
  if (!own) throw AppError.forbidden('Your role does not allow you to list people.');
  return withTenant(deps.sequelize, tenantId, () => usersPage(deps.sequelize, tenantId, q, own.organisationId));
}

/**
 * Locks the membership and, with it, every tenant admin membership of the tenant, in one statement and
 * in id order: two admins changing each other at once then queue instead of deadlocking, and the count
 * of admins cannot change under the check that follows.
 */
async function lockMembershipAndAdmins(sequelize: Sequelize, tenantId: string, id: string) {
  const rows = await sequelize.query<MembershipRow>(
    `SELECT id, tenant_id AS "tenantId", user_id AS "userId", organisation_id AS "organisationId", role FROM memberships
     WHERE tenant_id = :tenantId AND (id = :id OR role = 'tenant_admin') ORDER BY id FOR UPDATE`,
    { replacements: { id, tenantId }, type: QueryTypes.SELECT },
  );
  return { record: rows.find((r) => r.id === id) ?? null, otherAdmins: rows.filter((r) => r.id !== id && r.role === 'tenant_admin').length };
}

const adminActor = (caller: CallerContext) => {
  const roles = caller.actor.memberships.map((m) => m.role);
  return { userId: caller.user.id, name: caller.user.name, role: roles.includes('tenant_admin') ? 'tenant_admin' : (roles[0] ?? null) };
};

const lastAdmin = () => AppError.unprocessable('This is the last tenant admin of this tenant. Give someone else the tenant admin role first.');

/** One membership the caller may read (404 otherwise): what a refused change of it is answered against. */
export async function readMembership(deps: AppDeps, caller: CallerContext, id: string): Promise<MembershipRow> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const [row] = await deps.sequelize.query<MembershipRow>(
      `SELECT id, tenant_id AS "tenantId", user_id AS "userId", organisation_id AS "organisationId", role FROM memberships WHERE tenant_id = :tenantId AND id = :id`,
      { replacements: { id, tenantId }, type: QueryTypes.SELECT },
    );
    return authorizeRecord(caller.ability, 'read', 'Membership', row ?? null, 'membership');
  });
}

/** Changes the role of one membership; the change and its audit event commit together or not at all. */
export async function changeMembershipRole(deps: AppDeps, caller: CallerContext, id: string, role: Role): Promise<{ membership: MembershipRow; from: Role }> {
  const { sequelize } = deps;
  const { tenantId } = caller.actor;
  return withTenant(sequelize, tenantId, async () => {
    const locked = await lockMembershipAndAdmins(sequelize, tenantId, id);
    const record = authorizeRecord(caller.ability, 'update', 'Membership', locked.record, 'membership');
    const from = record.role;
    if (from === role) return { membership: record, from };
    if (from === 'tenant_admin') {
      if (record.userId === caller.actor.userId) throw AppError.unprocessable('You cannot remove your own tenant admin role; ask another admin.');
      if (locked.otherAdmins === 0) throw lastAdmin();
    }
    try {
      await sequelize.query(`UPDATE memberships SET role = :role, updated_at = now() WHERE id = :id AND tenant_id = :tenantId`, { replacements: { id, tenantId, role } });
    } catch (err) {
      if (err instanceof UniqueConstraintError) throw AppError.conflict(`This person already has the ${roleLabels[role].toLowerCase()} role in that organisation.`);
      throw err;
    }
    await appendAudit(sequelize, {
      tenantId,
      entityType: 'membership',
      entityId: id,
      action: 'role_changed',
      fromState: from,
      toState: role,
      actor: adminActor(caller),
      ip: caller.ip ?? null,
      data: { userId: record.userId, organisationId: record.organisationId },
      occurredAt: deps.clock.now(),
    });
    return { membership: { ...record, role }, from };
  });
}

/** Takes one role away from a person in this tenant, with its audit event, in one transaction. */
export async function removeMembership(deps: AppDeps, caller: CallerContext, id: string): Promise<MembershipRow> {
  const { sequelize } = deps;
  const { tenantId } = caller.actor;
  return withTenant(sequelize, tenantId, async () => {
    const locked = await lockMembershipAndAdmins(sequelize, tenantId, id);
    const record = authorizeRecord(caller.ability, 'delete', 'Membership', locked.record, 'membership');
    if (record.userId === caller.actor.userId) throw AppError.unprocessable('You cannot remove your own membership.');
    if (record.role === 'tenant_admin' && locked.otherAdmins === 0) throw lastAdmin();
    await sequelize.query(`DELETE FROM memberships WHERE id = :id AND tenant_id = :tenantId`, { replacements: { id, tenantId } });
    await appendAudit(sequelize, {
      tenantId,
      entityType: 'membership',
      entityId: id,
      action: 'removed',
      fromState: record.role,
      toState: null,
      actor: adminActor(caller),
      ip: caller.ip ?? null,
      data: { userId: record.userId, organisationId: record.organisationId },
      occurredAt: deps.clock.now(),
    });
    return record;
  });
}

async function qualificationsPage(sequelize: Sequelize, tenantId: string, page: number, pageSize: number, userId?: string): Promise<Page<QualificationRow>> {
  const replacements = { tenantId, userId: userId ?? null, limit: pageSize, offset: (page - 1) * pageSize };
  const where = `q.tenant_id = :tenantId AND (CAST(:userId AS uuid) IS NULL OR q.user_id = CAST(:userId AS uuid))`;
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM qualifications q WHERE ${where}`, { replacements, type: QueryTypes.SELECT });
  const items = await sequelize.query<QualificationRow>(
    `SELECT q.id, q.tenant_id AS "tenantId", q.user_id AS "userId", u.name AS "userName", q.kind, q.reference,
            to_char(q.issued_on, 'YYYY-MM-DD') AS "issuedOn", to_char(q.expires_on, 'YYYY-MM-DD') AS "expiresOn"
     FROM qualifications q JOIN users u ON u.id = q.user_id WHERE ${where} ORDER BY q.expires_on, u.name LIMIT :limit OFFSET :offset`,
    { replacements, type: QueryTypes.SELECT },
  );
  return { items, total: n, page, pageSize };
}

export async function listQualifications(deps: AppDeps, caller: CallerContext, q: PageQuery & { userId?: string }) {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'Qualification', { tenantId }, 'qualifications');
  return withTenant(deps.sequelize, tenantId, () => qualificationsPage(deps.sequelize, tenantId, q.page, q.pageSize, q.userId));
}

export async function createQualification(deps: AppDeps, caller: CallerContext, input: QualificationInput) {
  const { tenantId } = caller.actor;
  const { sequelize } = deps;
  authorizeType(caller.ability, 'create', 'Qualification', { tenantId }, 'qualifications');
  return withTenant(sequelize, tenantId, async () => {
    const member = await sequelize.query(`SELECT 1 FROM memberships WHERE tenant_id = :tenantId AND user_id = :userId`, { replacements: { tenantId, userId: input.userId }, type: QueryTypes.SELECT });
    if (!member.length) throw AppError.validation('That person has no role in this tenant.', [{ path: 'userId', message: 'Choose a member of this tenant.' }]);
    const [row] = await sequelize.query<{ id: string }>(
      `INSERT INTO qualifications (tenant_id, user_id, kind, reference, issued_on, expires_on) VALUES (:tenantId, :userId, :kind, :reference, :issuedOn, :expiresOn) RETURNING id`,
      { replacements: { tenantId, ...input, reference: input.reference ?? null }, type: QueryTypes.SELECT },
    );
    return { id: row.id, tenantId, ...input };
  });
}

export async function inviteMember(deps: AppDeps, caller: CallerContext, input: InviteInput) {
  authorizeType(caller.ability, 'create', 'Invitation', { tenantId: caller.actor.tenantId }, 'invitations');
  await invite(deps, caller.actor.tenantId, caller.actor.userId, input);
}
