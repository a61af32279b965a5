// Finding H2: the owner-run (SECURITY DEFINER) database functions. Only the server's role may call the
// ones it uses, nobody else may call the rest, and none of them can be fooled by a temporary table.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';
import nodemailer, { type Transporter } from 'nodemailer';
import { deliverDueMail } from '../../server/src/lib/mailer';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { users } from '../fixtures/permit-fixtures';

let srv: TestServer;
beforeAll(async () => {
  srv = await startTestServer();
});
afterAll(() => srv?.close());

const rows = <T extends object>(db: Sequelize, sql: string, replacements: Record<string, unknown> = {}) => db.query<T>(sql, { replacements, type: QueryTypes.SELECT });
const pgCode = (err: unknown) => (err as { parent?: { code?: string } }).parent?.code;

describe('finding H2: owner-run database functions', () => {
  it('finding H2: when the owner-run functions are listed, then PUBLIC may execute none of them and each searches the temporary schema last', async () => {
    const found = await rows<{ fn: string; public_may: boolean; config: string[] | null }>(
      srv.deps.sequelize,
      `SELECT p.oid::regprocedure::text AS fn,
              coalesce(bool_or(a.grantee = 0 AND a.privilege_type = 'EXECUTE'), p.proacl IS NULL) AS public_may,
              p.proconfig AS config
       FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace
       LEFT JOIN LATERAL aclexplode(p.proacl) a ON true
       WHERE n.nspname = 'public' AND p.prosecdef
       GROUP BY p.oid, p.proacl, p.proconfig ORDER BY 1`,
    );
    // Those of migrations 0090, 0100 and 0150, and any added since.
    expect(found.length).toBeGreaterThanOrEqual(12);
    for (const f of found) {
      expect({ fn: f.fn, publicMay: f.public_may }).toEqual({ fn: f.fn, publicMay: false });
      expect({ fn: f.fn, config: f.config }).toEqual({ fn: f.fn, config: ['search_path=pg_catalog, public, pg_temp'] });
    }
  });

  it('finding H2: when the server role calls the function that bumps an account\'s access version, then PostgreSQL refuses it and nothing changes', async () => {
    const [tech] = await rows<{ id: string; access_version: string }>(srv.deps.sequelize, `SELECT id, access_version FROM users WHERE email = :email`, { email: users.tech });
    const app = srv.appDeps.sequelize;
    const calls = [
      `SELECT hp_access_changed(ARRAY[:id]::uuid[])`,
      `SELECT hp_tenants_access_changed()`,
      `SELECT hp_organisations_access_changed()`,
      `SELECT hp_memberships_access_changed()`,
    ];
    for (const sql of calls) {
      const err = await app.query(sql, { replacements: { id: tech.id } }).then(() => null, (e: unknown) => e);
      expect({ sql, code: pgCode(err) }).toEqual({ sql, code: '42501' });
    }
    const [after] = await rows<{ access_version: string }>(srv.deps.sequelize, `SELECT access_version FROM users WHERE id = :id`, { id: tech.id });
    expect(after.access_version).toBe(tech.access_version);
  });

  it('finding H2: when a server connection holds a temporary table named like a real one, then an owner-run function still reads the real table', async () => {
    const owner = srv.deps.sequelize;
    const [tech] = await rows<{ id: string }>(owner, `SELECT id FROM users WHERE email = :email`, { email: users.tech });
    const [other] = await rows<{ tenant_id: string; organisation_id: string }>(
      owner,
      `SELECT t.id AS tenant_id, o.id AS organisation_id FROM tenants t JOIN organisations o ON o.tenant_id = t.id WHERE t.slug = 'harlowridge' LIMIT 1`,
    );
    const app = srv.appDeps.sequelize;
    const roles = await app.transaction(async (transaction) => {
      await app.query(`CREATE TEMP TABLE memberships (id uuid, tenant_id uuid, organisation_id uuid, user_id uuid, role text) ON COMMIT DROP`, { transaction });
      await app.query(`INSERT INTO memberships VALUES (gen_random_uuid(), :tenantId, :organisationId, :userId, 'tenant_admin')`, {
        replacements: { tenantId: other.tenant_id, organisationId: other.organisation_id, userId: tech.id },
        transaction,
      });
      return app.query<{ tenant_id: string; role: string }>(`SELECT tenant_id, role FROM hp_memberships_of(:userId)`, { replacements: { userId: tech.id }, type: QueryTypes.SELECT, transaction });
    });
    expect(roles.length).toBeGreaterThan(0);
    expect(roles.map((r) => r.role)).not.toContain('tenant_admin');
    expect(roles.map((r) => r.tenant_id)).not.toContain(other.tenant_id);
  });

  it('finding H2: when the product does its own work through those functions, then it still works as the server role', async () => {
    // Who is signed in (hp_memberships_of).
    const admin = await srv.signIn(users.admin);
    const me = await admin.get('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body.memberships.length).toBeGreaterThan(0);

    // A role change fires the membership trigger, which bumps the access version as the owner.
    const [m] = await rows<{ id: string; role: string; user_id: string; access_version: string }>(
      srv.deps.sequelize,
      `SELECT m.id, m.role, m.user_id, u.access_version FROM memberships m JOIN users u ON u.id = m.user_id WHERE u.email = :email LIMIT 1`,
      { email: users.tech2 },
    );
    const changed = await admin.patch(`/api/memberships/${m.id}`, { role: 'gas_tester' });
    expect(changed.status, JSON.stringify(changed.body)).toBe(200);
    const [after] = await rows<{ access_version: string }>(srv.deps.sequelize, `SELECT access_version FROM users WHERE id = :id`, { id: m.user_id });
    expect(BigInt(after.access_version)).toBeGreaterThan(BigInt(m.access_version));
    expect((await admin.patch(`/api/memberships/${m.id}`, { role: m.role })).status).toBe(200);

    // Reset requests and links, invitation links (hp_request_password_reset, hp_claim_reset_token, hp_invitation_tenant).
    const visitor = await srv.anonymous();
    expect((await visitor.post('/api/auth/forgot-password', { email: users.auditor })).status).toBe(200);
    expect((await visitor.post('/api/auth/reset-password', { token: 'y'.repeat(43), password: 'a-long-new-password-9' })).status).toBe(422);
    expect((await visitor.post('/api/auth/accept-invitation', { token: 'z'.repeat(43), name: 'Nobody', password: 'a-long-new-password-9' })).status).toBe(422);

    // The scheduler's tenant list (hp_tenant_ids).
    const [{ n }] = await rows<{ n: number }>(srv.appDeps.sequelize, `SELECT count(*)::int AS n FROM hp_tenant_ids()`);
    expect(n).toBeGreaterThan(1);

    // The outbox sender: a failed attempt, then a sent mail (hp_outbox_claim, hp_outbox_failed, hp_outbox_sent).
    await srv.deps.sequelize.query(`DELETE FROM mail_outbox WHERE status = 'pending' AND lower(to_address) <> lower(:email)`, { replacements: { email: users.auditor } });
    const failing = { sendMail: () => Promise.reject(new Error('mail server down')) } as unknown as Transporter;
    expect(await deliverDueMail(srv.appDeps.sequelize, failing, 'no-reply@holdpoint.example', srv.appDeps.logger, 1)).toBe(0);
    const [failed] = await rows<{ attempts: number }>(srv.deps.sequelize, `SELECT attempts FROM mail_outbox WHERE lower(to_address) = lower(:email)`, { email: users.auditor });
    expect(failed.attempts).toBe(1);
    await srv.deps.sequelize.query(`UPDATE mail_outbox SET next_attempt_at = now() WHERE status = 'pending'`);
    const sent = await deliverDueMail(srv.appDeps.sequelize, nodemailer.createTransport({ jsonTransport: true }), 'no-reply@holdpoint.example', srv.appDeps.logger);
    expect(sent).toBeGreaterThan(0);
    const [done] = await rows<{ status: string }>(srv.deps.sequelize, `SELECT status FROM mail_outbox WHERE lower(to_address) = lower(:email)`, { email: users.auditor });
    expect(done.status).toBe('sent');
  });
});
