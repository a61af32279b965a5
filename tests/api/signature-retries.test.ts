// Signing a permit action means typing one's password again; a session left open must not let
// someone try passwords there without end.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, sign, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew } from '../fixtures/permit-journey';

describe('finding 9: wrong passwords when signing', () => {
  let srv: TestServer;
  let crew: Crew;
  let permitId = '';

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    permitId = await draftWithPlan(srv, crew, await demoIds(srv));
    await expectOk(await transition(crew.lead, permitId, 'submit'));
  });
  afterAll(() => srv?.close());

  it('when the authoriser signs with a wrong password five times, then the next signature is refused 429 saying how long to wait, even with the right password', async () => {
    for (let i = 0; i < 5; i++) {
      const res = await transition(crew.authoriser, permitId, 'approve', { password: `guess-number-${i}`, signedName: 'Priya Castellan' });
      expect(res.status, `wrong password ${i + 1}`).toBe(400);
      expect(res.body.error.details).toEqual([{ path: 'password', message: 'That password is wrong. Type the password you sign in with.' }]);
    }
    const res = await transition(crew.authoriser, permitId, 'approve', sign(users.authoriser));
    expect(res.status).toBe(429);
    expect(res.body).toEqual({ error: { code: 'rate_limited', message: 'Too many wrong passwords when signing. Wait 15 minutes and try again.', details: [] } });
    expect((await crew.authoriser.get(`/api/permits/${permitId}`)).body.state).toBe('requested');
  });

  it('when one person is held back, then another person still signs with their own password checked', async () => {
    const res = await transition(crew.authoriser2, permitId, 'approve', { password: 'not-marcus-password', signedName: 'Marcus Tellford' });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ path: 'password', message: 'That password is wrong. Type the password you sign in with.' }]);
  });

  it('when the wait is over, then the right password signs again', async () => {
    srv.clock.advanceMinutes(10);
    const early = await transition(crew.authoriser, permitId, 'approve', sign(users.authoriser));
    expect(early.status).toBe(429);
    expect(early.body.error.message).toBe('Too many wrong passwords when signing. Wait 5 minutes and try again.');
    srv.clock.advanceMinutes(6);
    const approved = await expectOk(await transition(crew.authoriser, permitId, 'approve', sign(users.authoriser)));
    expect(approved.state).toBe('approved');
  });
});
