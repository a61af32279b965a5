// Mail goes through the outbox: transitions never wait for SMTP, queued mail survives an SMTP outage,
// and every queued mail is delivered exactly once when the mail server is back, even with two senders.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { startMailCatcher } from '../../server/src/lib/mail-catcher';
import { deliverDueMail } from '../../server/src/lib/mailer';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew } from '../fixtures/permit-journey';

interface OutboxRow {
  id: number;
  to_address: string;
  subject: string;
  status: string;
  attempts: number;
  last_error: string | null;
}

describe('mail outbox while the mail server is down and after it returns', () => {
  let srv: TestServer;
  let crew: Crew;
  let smtpPort = 0;
  let catcher: Awaited<ReturnType<typeof startMailCatcher>> | null = null;
  let id = '';
  const outbox = () => srv.deps.sequelize.query<OutboxRow>(`SELECT id, to_address, subject, status, attempts, last_error FROM mail_outbox ORDER BY id`, { type: QueryTypes.SELECT });
  // The sender runs as the server's own role, as the worker does.
  const deliver = () => deliverDueMail(srv.appDeps.sequelize, srv.appDeps.mailTransport, srv.appDeps.config.MAIL_FROM, srv.appDeps.logger);

  beforeAll(async () => {
    // Take a free loopback port from a catcher, then stop it: the port is closed while the server runs.
    const probe = await startMailCatcher();
    smtpPort = probe.port;
    await probe.stop();
    srv = await startTestServer({ smtpPort });
    crew = await signInCrew(srv);
    // Demo history may have left mail behind; this test counts only its own.
    await srv.deps.sequelize.query(`DELETE FROM mail_outbox`);
    id = await draftWithPlan(srv, crew, await demoIds(srv));
  });
  afterAll(async () => {
    await catcher?.stop();
    await srv.close();
  });

  it('when the mail server is unreachable, then transitions still succeed and their mail waits in the outbox', async () => {
    await expectOk(await transition(crew.lead, id, 'submit'));
    await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)));
    const rows = await outbox();
    // Submit tells both authorisers; approve tells the lead (who is also the requester: one mail).
    expect(rows.map((r) => r.to_address).sort()).toEqual([users.authoriser, users.authoriser2, users.lead].sort());
    expect(rows.every((r) => r.status === 'pending' && r.attempts === 0)).toBe(true);
  });

  it('when delivery is tried with the server down, then nothing is sent, attempts count up and the error is kept', async () => {
    expect(await deliver()).toBe(0);
    const rows = await outbox();
    const tried = rows.filter((r) => r.attempts > 0);
    expect(tried.length).toBeGreaterThan(0);
    for (const r of tried) {
      expect(r.status).toBe('pending');
      expect(r.last_error).toMatch(/ECONNREFUSED|connect/i);
    }
    // A transition made during the outage is not held up either.
    await expectOk(await transition(crew.lead, id, 'accept', sign(users.lead)));
    expect((await outbox()).length).toBeGreaterThan(rows.length);
  });

  it('when a row was tried and is backing off, then a delivery run skips it until it is due', async () => {
    const [tried] = (await outbox()).filter((r) => r.attempts > 0);
    const [due] = await srv.deps.sequelize.query<{ later: boolean }>(`SELECT next_attempt_at > now() AS later FROM mail_outbox WHERE id = :id`, {
      replacements: { id: tried.id },
      type: QueryTypes.SELECT,
    });
    expect(due.later).toBe(true);
  });

  it('when the mail server is back on the same port, then every queued mail arrives exactly once, even with two senders at once', async () => {
    catcher = await startMailCatcher(smtpPort);
    const received: string[] = [];
    catcher.tester.bind((_addr, _id, email) => {
      for (const to of Object.keys(email.receivers)) received.push(`${to} | ${String(email.headers.subject)}`);
    });
    // Rows that failed wait out their backoff (next_attempt_at, seconds of wall-clock time that the
    // test clock does not move); make them due now instead of sleeping.
    await srv.deps.sequelize.query(`UPDATE mail_outbox SET next_attempt_at = now() WHERE status = 'pending'`);
    const queued = (await outbox()).filter((r) => r.status === 'pending');
    expect(queued.length).toBeGreaterThanOrEqual(4);

    // Two workers at once (FOR UPDATE SKIP LOCKED), then two more runs with nothing left to do.
    const [a, b] = await Promise.all([deliver(), deliver()]);
    expect(a + b).toBe(queued.length);
    expect(await deliver()).toBe(0);
    expect(await deliver()).toBe(0);

    const expected = queued.map((r) => `${r.to_address} | ${r.subject}`).sort();
    expect(received.sort()).toEqual(expected);
    expect(new Set(received).size).toBe(received.length);
    const after = await outbox();
    expect(after.every((r) => r.status === 'sent')).toBe(true);
  });
});
