// Twenty signed approvals of one permit at the same moment, from two authorisers: the row lock and the
// version check must let exactly one through.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew } from '../fixtures/permit-journey';

describe('concurrent approvals of one permit', () => {
  let srv: TestServer;
  let crew: Crew;
  let id = '';

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    id = await draftWithPlan(srv, crew, await demoIds(srv));
    await expectOk(await transition(crew.lead, id, 'submit'));
  });
  afterAll(() => srv.close());

  it('when 20 approvals with the same version arrive at once from two authorisers, then exactly one succeeds, 19 get 409, and one approve event is audited', async () => {
    const { version } = (await crew.authoriser.get(`/api/permits/${id}`)).body as { version: number };
    // Each request re-enters the password (an argon2 verify) before it reaches the row lock.
    const calls = Array.from({ length: 20 }, (_, i) => {
      const [client, email] = i % 2 === 0 ? [crew.authoriser, users.authoriser] : [crew.authoriser2, users.authoriser2];
      return client.post(`/api/permits/${id}/transitions`, { event: 'approve', version, ...sign(email) });
    });
    const results = await Promise.all(calls);
    const statuses = results.map((r) => r.status).sort();
    expect(statuses.filter((s) => s === 200), JSON.stringify(results.filter((r) => r.status !== 409 && r.status !== 200).map((r) => r.body))).toHaveLength(1);
    expect(statuses.filter((s) => s === 409)).toHaveLength(19);
    for (const r of results.filter((x) => x.status === 409)) {
      expect(r.body.error.code).toBe('conflict');
      expect(r.body.error.current).toEqual({ state: 'approved', version: version + 1 });
    }

    const events = await srv.deps.sequelize.query<{ action: string; actor_name: string }>(`SELECT action, actor_name FROM audit_events WHERE permit_id = :id AND action = 'approve'`, {
      replacements: { id },
      type: QueryTypes.SELECT,
    });
    expect(events).toHaveLength(1);
    const signatures = await srv.deps.sequelize.query(`SELECT 1 FROM permit_signatures WHERE permit_id = :id AND event = 'approve'`, { replacements: { id }, type: QueryTypes.SELECT });
    expect(signatures).toHaveLength(1);
    const permit = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect(permit).toMatchObject({ state: 'approved', version: version + 1 });
    expect(permit.authoriserName).toBe(events[0].actor_name);
  });

  it('when the same thing happened, then the mail for it was queued once per recipient', async () => {
    const rows = await srv.deps.sequelize.query<{ to_address: string; n: number }>(
      `SELECT to_address, count(*)::int AS n FROM mail_outbox WHERE subject LIKE '% Approved:%' GROUP BY to_address`,
      { type: QueryTypes.SELECT },
    );
    expect(rows.length).toBeGreaterThan(0);
    for (const r of rows) expect(r.n, r.to_address).toBe(1);
  });

  it('when the chain is checked afterwards, then it verifies', async () => {
    const res = await crew.auditor.get('/api/audit/verify');
    expect(res.body).toMatchObject({ ok: true });
  });
});
