// Finding 5: a role change and a membership removal are each one service call, one transaction with the
// membership locked, and one audit event; a tenant is never left without a tenant admin, also when two
// admins act at the same moment.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { randomBytes } from 'node:crypto';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';

interface AuditRow {
  action: string;
  from_state: string | null;
  to_state: string | null;
  actor_user_id: string | null;
  data: Record<string, unknown>;
}

describe('membership changes', () => {
  let srv: TestServer;
  let admin: ApiClient;
  let adminUserId: string;
  const tenants: Record<string, { id: string; operatorOrgId: string; contractorOrgId: string }> = {};

  const rows = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const eventsOf = (membershipId: string) =>
    rows<AuditRow>(`SELECT action, from_state, to_state, actor_user_id, data FROM audit_events WHERE entity_type = 'membership' AND entity_id = :membershipId ORDER BY seq`, { membershipId });
  const roleOf = async (membershipId: string) => (await rows<{ role: string }>(`SELECT role FROM memberships WHERE id = :membershipId`, { membershipId }))[0]?.role ?? null;

  /** A new person with one role; `canSignIn` gives them the demo password (copied from the demo admin). */
  async function newMember(tenant: string, role: string, org: 'operator' | 'contractor' = 'contractor', canSignIn = false) {
    const email = `member-${randomBytes(5).toString('hex')}@memberships.example`;
    const [user] = await rows<{ id: string }>(
      `INSERT INTO users (email, name, password_hash) SELECT :email, 'Membership Test Person', CASE WHEN :canSignIn THEN password_hash END FROM users WHERE email = 'admin@bramblecote.example' RETURNING id`,
      { email, canSignIn },
    );
    const t = tenants[tenant];
    const [m] = await rows<{ id: string }>(`INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:tenantId, :orgId, :userId, :role) RETURNING id`, {
      tenantId: t.id,
      orgId: org === 'operator' ? t.operatorOrgId : t.contractorOrgId,
      userId: user.id,
      role,
    });
    return { email, userId: user.id, membershipId: m.id };
  }

  beforeAll(async () => {
    srv = await startTestServer();
    admin = await srv.signIn('admin@bramblecote.example');
    adminUserId = (await admin.get('/api/auth/me')).body.user.id;
    for (const slug of ['bramblecote', 'harlowridge']) {
      const [t] = await rows<{ id: string; operatorOrgId: string; contractorOrgId: string }>(
        `SELECT t.id, (SELECT id FROM organisations WHERE tenant_id = t.id AND kind = 'operator' LIMIT 1) AS "operatorOrgId",
                (SELECT id FROM organisations WHERE tenant_id = t.id AND kind = 'contractor' LIMIT 1) AS "contractorOrgId"
         FROM tenants t WHERE t.slug = :slug`,
        { slug },
      );
      tenants[slug] = t;
    }
  });
  afterAll(() => srv.close());

  it('finding 5: when the admin changes a role, then the membership has the new role and exactly one audit event records who changed it from what to what', async () => {
    const person = await newMember('bramblecote', 'isolation_technician');
    const res = await admin.patch(`/api/memberships/${person.membershipId}`, { role: 'gas_tester' });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    expect(res.body).toMatchObject({ id: person.membershipId, userId: person.userId, role: 'gas_tester' });
    expect(await roleOf(person.membershipId)).toBe('gas_tester');
    const events = await eventsOf(person.membershipId);
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ action: 'role_changed', from_state: 'isolation_technician', to_state: 'gas_tester', actor_user_id: adminUserId });
    expect(events[0].data).toMatchObject({ userId: person.userId });
  });

  it('finding 5: when the admin removes a membership, then it is gone and exactly one audit event records the role taken away', async () => {
    const person = await newMember('bramblecote', 'gas_tester');
    const res = await admin.delete(`/api/memberships/${person.membershipId}`);
    expect(res.status, JSON.stringify(res.body)).toBe(204);
    expect(await roleOf(person.membershipId)).toBeNull();
    const events = await eventsOf(person.membershipId);
    expect(events).toHaveLength(1);
    expect(events[0]).toMatchObject({ action: 'removed', from_state: 'gas_tester', to_state: null, actor_user_id: adminUserId });
  });

  it('finding 5: when two role changes of one membership arrive at once (ten times), then both apply one after the other, each with its event, and the stored role is the last event’s', async () => {
    for (let round = 0; round < 10; round++) {
      const person = await newMember('bramblecote', 'isolation_technician');
      const [a, b] = await Promise.all([
        admin.patch(`/api/memberships/${person.membershipId}`, { role: 'auditor' }),
        admin.patch(`/api/memberships/${person.membershipId}`, { role: 'control_room' }),
      ]);
      expect([a.status, b.status], JSON.stringify([a.body, b.body])).toEqual([200, 200]);
      const events = await eventsOf(person.membershipId);
      expect(events.map((e) => e.action)).toEqual(['role_changed', 'role_changed']);
      // Serial, not lost: the second change starts from the role the first one left.
      expect(events[0].from_state).toBe('isolation_technician');
      expect(events[1].from_state).toBe(events[0].to_state);
      expect(new Set([events[0].to_state, events[1].to_state])).toEqual(new Set(['auditor', 'control_room']));
      expect(await roleOf(person.membershipId)).toBe(events[1].to_state);
    }
  });

  it('finding 5: when the only two tenant admins take each other’s admin role away at the same moment (five times), then one is refused and the tenant keeps an admin', async () => {
    const one = await newMember('harlowridge', 'tenant_admin', 'operator', true);
    const two = await newMember('harlowridge', 'tenant_admin', 'operator', true);
    const [first, second] = [await srv.signIn(one.email), await srv.signIn(two.email)];
    const refusals: Record<number, number> = {};
    for (let round = 0; round < 5; round++) {
      await srv.deps.sequelize.query(`UPDATE memberships SET role = 'tenant_admin' WHERE id IN (:ids)`, { replacements: { ids: [one.membershipId, two.membershipId] } });
      const before = (await eventsOf(one.membershipId)).length + (await eventsOf(two.membershipId)).length;
      const [a, b] = await Promise.all([
        first.patch(`/api/memberships/${two.membershipId}`, { role: 'auditor' }),
        second.patch(`/api/memberships/${one.membershipId}`, { role: 'auditor' }),
      ]);
      // The one who loses either was already demoted when their request was read (403), or waited on the
      // lock and found they would leave the tenant without an admin (422).
      const [won, refused] = a.status === 200 ? [a, b] : [b, a];
      expect(won.status, JSON.stringify([a.body, b.body])).toBe(200);
      expect([403, 422], JSON.stringify(refused.body)).toContain(refused.status);
      if (refused.status === 422) expect(refused.body.error.message).toMatch(/last tenant admin/);
      refusals[refused.status] = (refusals[refused.status] ?? 0) + 1;
      const admins = await rows(`SELECT 1 FROM memberships WHERE tenant_id = :t AND role = 'tenant_admin'`, { t: tenants.harlowridge.id });
      expect(admins).toHaveLength(1);
      const after = (await eventsOf(one.membershipId)).length + (await eventsOf(two.membershipId)).length;
      expect(after - before).toBe(1);
    }
    console.log(`mutual demotions: 5 rounds, refusals by status ${JSON.stringify(refusals)}`);
  });

  it('finding 5: when the new role is one the person already holds in that organisation, then 409 in the error shape and nothing changes', async () => {
    const person = await newMember('bramblecote', 'isolation_technician');
    await rows(`INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:t, :o, :u, 'gas_tester') RETURNING id`, {
      t: tenants.bramblecote.id,
      o: tenants.bramblecote.contractorOrgId,
      u: person.userId,
    });
    const res = await admin.patch(`/api/memberships/${person.membershipId}`, { role: 'gas_tester' });
    expect(res.status, JSON.stringify(res.body)).toBe(409);
    expect(res.body.error).toMatchObject({ code: 'conflict' });
    expect(res.body.error.message).toMatch(/already has the gas tester role/);
    expect(await roleOf(person.membershipId)).toBe('isolation_technician');
    expect(await eventsOf(person.membershipId)).toHaveLength(0);
  });

  it('when the admin sets the role a membership already has, then nothing is written and no event is added', async () => {
    const person = await newMember('bramblecote', 'auditor', 'operator');
    const res = await admin.patch(`/api/memberships/${person.membershipId}`, { role: 'auditor' });
    expect(res.status).toBe(200);
    expect(res.body.role).toBe('auditor');
    expect(await eventsOf(person.membershipId)).toHaveLength(0);
  });

  it('when the admin takes away their own admin role or their own membership, then it is refused and no event is added', async () => {
    const [own] = await rows<{ id: string }>(`SELECT id FROM memberships WHERE user_id = :u AND role = 'tenant_admin'`, { u: adminUserId });
    const demote = await admin.patch(`/api/memberships/${own.id}`, { role: 'auditor' });
    expect(demote.status).toBe(422);
    const remove = await admin.delete(`/api/memberships/${own.id}`);
    expect(remove.status).toBe(422);
    expect(await roleOf(own.id)).toBe('tenant_admin');
    expect(await eventsOf(own.id)).toHaveLength(0);
  });

  it('when every change above is done, then both tenants’ audit chains verify', async () => {
    const bramblecote = await admin.get('/api/audit/verify');
    expect(bramblecote.status).toBe(200);
    expect(bramblecote.body.ok).toBe(true);
    const [harlow] = await rows<{ email: string }>(
      `SELECT u.email FROM users u JOIN memberships m ON m.user_id = u.id WHERE m.tenant_id = :t AND m.role = 'tenant_admin' LIMIT 1`,
      { t: tenants.harlowridge.id },
    );
    const harlowAdmin = await srv.signIn(harlow.email);
    const res = await harlowAdmin.get('/api/audit/verify');
    expect(res.status).toBe(200);
    expect(res.body.ok).toBe(true);
  });
});
