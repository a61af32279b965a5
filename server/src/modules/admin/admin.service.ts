import { QueryTypes, type Sequelize } from 'sequelize';
import type { OrganisationInput, QualificationInput, UsersQuery } from '@shared/schemas/auth.schema';
import type { Role } from '@shared/abilities/roles';
import type { Page } from '@shared/schemas/common.schema';
import { AppError } from '../../errors/app-error';

export interface OrganisationRow {
  id: string;
  tenantId: string;
  name: string;
  kind: 'operator' | 'contractor';
  members: number;
}

export async function listOrganisations(sequelize: Sequelize, tenantId: string, page: number, pageSize: number): Promise<Page<OrganisationRow>> {
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

export async function createOrganisation(sequelize: Sequelize, tenantId: string, input: OrganisationInput) {
  const exists = await sequelize.query(`SELECT 1 FROM organisations WHERE tenant_id = :tenantId AND lower(name) = lower(:name)`, { replacements: { tenantId, name: input.name }, type: QueryTypes.SELECT });
  if (exists.length) throw AppError.conflict(`An organisation called "${input.name}" already exists.`);
  const [row] = await sequelize.query<{ id: string }>(`INSERT INTO organisations (tenant_id, name, kind) VALUES (:tenantId, :name, :kind) RETURNING id`, {
    replacements: { tenantId, ...input },
    type: QueryTypes.SELECT,
  });
  return { id: row.id, tenantId, ...input, members: 0 };
}

export interface UserListRow {
  membershipId: string;
  userId: string;
  name: string;
  email: string;
  role: Role;
  organisationId: string;
  organisationName: string;
  organisationKind: 'operator' | 'contractor';
}

const userSort: Record<UsersQuery['sort'], string> = { name: 'u.name', email: 'lower(u.email)', role: 'm.role', organisation: 'o.name' };

/** One row per membership so the admin sees every role a person holds. */
export async function listUsers(sequelize: Sequelize, tenantId: string, q: UsersQuery, onlyOrganisationId?: string): Promise<Page<UserListRow>> {
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
  const items = await sequelize.query<UserListRow>(
    `SELECT m.id AS "membershipId", u.id AS "userId", u.name, u.email, m.role, o.id AS "organisationId", o.name AS "organisationName", o.kind AS "organisationKind"
     ${sql} ORDER BY ${userSort[q.sort]} ${q.dir === 'desc' ? 'DESC' : 'ASC'}, m.id LIMIT :limit OFFSET :offset`,
    { replacements, type: QueryTypes.SELECT },
  );
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

export async function findMembership(sequelize: Sequelize, tenantId: string, id: string) {
  const rows = await sequelize.query<{ id: string; tenantId: string; userId: string; organisationId: string; role: Role }>(
    `SELECT id, tenant_id AS "tenantId", user_id AS "userId", organisation_id AS "organisationId", role FROM memberships WHERE id = :id AND tenant_id = :tenantId`,
    { replacements: { id, tenantId }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

export async function changeMembershipRole(sequelize: Sequelize, tenantId: string, id: string, role: Role) {
  await sequelize.query(`UPDATE memberships SET role = :role, updated_at = now() WHERE id = :id AND tenant_id = :tenantId`, { replacements: { id, tenantId, role } });
}

export async function removeMembership(sequelize: Sequelize, tenantId: string, id: string) {
  await sequelize.query(`DELETE FROM memberships WHERE id = :id AND tenant_id = :tenantId`, { replacements: { id, tenantId } });
}

export interface QualificationRow {
  id: string;
  tenantId: string;
  userId: string;
  userName: string;
  kind: string;
  reference: string | null;
  issuedOn: string;
  expiresOn: string;
}

export async function listQualifications(sequelize: Sequelize, tenantId: string, page: number, pageSize: number, userId?: string): Promise<Page<QualificationRow>> {
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

export async function createQualification(sequelize: Sequelize, tenantId: string, input: QualificationInput) {
  const member = await sequelize.query(`SELECT 1 FROM memberships WHERE tenant_id = :tenantId AND user_id = :userId`, { replacements: { tenantId, userId: input.userId }, type: QueryTypes.SELECT });
  if (!member.length) throw AppError.validation('That person has no role in this tenant.', [{ path: 'userId', message: 'Choose a member of this tenant.' }]);
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO qualifications (tenant_id, user_id, kind, reference, issued_on, expires_on) VALUES (:tenantId, :userId, :kind, :reference, :issuedOn, :expiresOn) RETURNING id`,
    { replacements: { tenantId, ...input, reference: input.reference ?? null }, type: QueryTypes.SELECT },
  );
  return { id: row.id, tenantId, ...input };
}

/** True when the person holds an in-date qualification of the kind on the given day, in this tenant. */
export async function holdsQualification(sequelize: Sequelize, tenantId: string, userId: string, kind: string, on: Date, transaction?: import('sequelize').Transaction) {
  const rows = await sequelize.query(
    `SELECT 1 FROM qualifications WHERE tenant_id = :tenantId AND user_id = :userId AND kind = :kind AND issued_on <= CAST(:on AS date) AND expires_on >= CAST(:on AS date) LIMIT 1`,
    { replacements: { tenantId, userId, kind, on: on.toISOString().slice(0, 10) }, type: QueryTypes.SELECT, transaction },
  );
  return rows.length > 0;
}
