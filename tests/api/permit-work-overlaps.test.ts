// Many permits on one stretch of line: the overlap warning (HSE HSG250, conflicting work must be
// identified) stays a short list and one mail per person, however many permits share the stretch.
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { captureMail, type CaughtMail } from '../fixtures/mail-capture';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';

interface OverlapView {
  number: string;
  workOverlaps: { permitNumber: string; message: string }[];
  workOverlapsMore: number;
}

describe('finding PERF-4a: the overlap warning is bounded', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let capture: Awaited<ReturnType<typeof captureMail>>;
  const mails: CaughtMail[] = [];
  const stretch = { fromPosition: 33.0, toPosition: 33.4 };
  const earlier: { id: string; number: string }[] = [];

  const view = async (id: string) => (await expectOk(await crew.authoriser.get(`/api/permits/${id}`))) as unknown as OverlapView;

  beforeAll(async () => {
    capture = await captureMail(mails);
    srv = await startTestServer({ smtpPort: capture.catcher.port });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    // Eleven permits already sent for approval on the same stretch of BM-10.
    for (let i = 1; i <= 11; i++) {
      const id = await draftWithPlan(srv, crew, ids, { title: `Recoat ${i} at MP 33`, ...stretch });
      await expectOk(await transition(crew.lead, id, 'submit'));
      earlier.push({ id, number: (await view(id)).number });
    }
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
    await capture?.catcher.stop();
  });

  it('when a twelfth permit on a stretch eleven others work on is sent for approval, then its page names the first ten and counts one more, and each authoriser gets one mail naming ten and "1 more", not eleven', async () => {
    await capture.flush(srv);
    mails.length = 0;
    const id = await draftWithPlan(srv, crew, ids, { title: 'Dig-up at MP 33.2', ...stretch });
    await expectOk(await transition(crew.lead, id, 'submit'));
    await capture.flush(srv);

    const page = await view(id);
    const byNumber = [...earlier].sort((a, b) => a.number.localeCompare(b.number));
    expect(page.workOverlaps.map((o) => o.permitNumber)).toEqual(byNumber.slice(0, 10).map((p) => p.number));
    expect(page.workOverlapsMore).toBe(1);

    const authorisers = (
      await srv.deps.sequelize.query<{ email: string }>(
        `SELECT DISTINCT u.email FROM users u JOIN memberships m ON m.user_id = u.id WHERE m.tenant_id = :tenantId AND m.role = 'authoriser' AND u.disabled_at IS NULL ORDER BY u.email`,
        { replacements: { tenantId: ids.tenantId }, type: QueryTypes.SELECT },
      )
    ).map((u) => u.email);
    const flagged = mails.filter((m) => m.subject.includes('same stretch'));
    expect(flagged.map((m) => m.to).sort()).toEqual(authorisers);
    expect(flagged[0].subject).toBe(`${page.number} works on the same stretch of BM-10 Cedar Run Lateral as 11 other permits`);
    for (const p of byNumber.slice(0, 10)) expect(flagged[0].body).toContain(`Permit ${p.number} (`);
    expect(flagged[0].body).not.toContain(`Permit ${byNumber[10].number} (`);
    expect(flagged[0].body).toContain('And 1 more permit on this stretch');

    // Found again at approval: the same finding mails nobody twice.
    mails.length = 0;
    await expectOk(await transition(crew.authoriser, id, 'approve', sign(users.authoriser)));
    await capture.flush(srv);
    expect(mails.filter((m) => m.subject.includes('same stretch'))).toEqual([]);
  });

  it('when one of the earlier permits is read, then it too shows ten and counts the rest (eleven others now)', async () => {
    const first = await view(earlier[0].id);
    expect(first.workOverlaps).toHaveLength(10);
    expect(first.workOverlapsMore).toBe(1);
    expect(first.workOverlaps.map((o) => o.permitNumber)).not.toContain(earlier[0].number);
  });
});
