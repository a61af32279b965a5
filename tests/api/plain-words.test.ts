// Issue 17: no machine time or code reaches a person. The hand-back blocker names the end of the fire
// watch in the site's clock with its zone, and a removal with an outcome that is not offered is answered
// in words, not with zod's list of codes.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import { formatInZone } from '@shared/time/zone';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { sign, transition, users } from '../fixtures/permit-fixtures';
import { expectOk, reasonsOf, signInCrew, type Crew } from '../fixtures/permit-journey';
import { seedDemo } from '../../server/src/demo';

const ISO = /\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/;

describe('issue 17: plain words on screen', () => {
  let srv: TestServer;
  let crew: Crew;
  let live = { id: '', tenant: '', zone: '' };

  beforeAll(async () => {
    srv = await startTestServer();
    // The demo's live hot work at MP 17.3, in the tenant's own zone.
    await seedDemo(srv.deps.sequelize, { permits: true });
    crew = await signInCrew(srv);
    const [row] = await srv.deps.sequelize.query<{ id: string; tenant: string; zone: string }>(
      `SELECT p.id, p.tenant_id AS tenant, t.time_zone AS zone FROM permits p JOIN tenants t ON t.id = p.tenant_id WHERE p.job_reference = 'BM-DEMO-1730'`,
      { type: QueryTypes.SELECT },
    );
    live = row;
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('issue 17: when hand-back waits for the fire watch, then the blocker names its end in the site time with the zone, never a machine time', async () => {
    expect(live.zone).not.toBe('UTC');
    await expectOk(await crew.lead.post(`/api/permits/${live.id}/hot-work-stopped`));
    const [{ ends }] = await srv.deps.sequelize.query<{ ends: Date }>(
      `SELECT hot_work_ended_at + make_interval(mins => fire_watch_minutes) AS ends FROM permits WHERE id = :id`,
      { replacements: { id: live.id }, type: QueryTypes.SELECT },
    );
    const reasons = reasonsOf(await transition(crew.lead, live.id, 'hand_back', sign(users.lead)));
    const watch = reasons.find((r) => r.startsWith('The fire watch runs until'));
    expect(watch).toContain(`The fire watch runs until ${formatInZone(ends, live.zone)} (`);
    expect(reasons.join(' ')).not.toMatch(ISO);
    // The permit page offers the same reasons on the hand-back action.
    const page = await crew.lead.get(`/api/permits/${live.id}`);
    const handBack = (page.body.actions as { event: string; reasons: string[] }[]).find((a) => a.event === 'hand_back');
    expect(handBack?.reasons.join(' ') ?? '').not.toMatch(ISO);
  });

  it('issue 17: when a plug removal names an outcome that is not offered, then the answer is 400 in words naming the field, with no code in it', async () => {
    const [plug] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM isolation_steps WHERE permit_id = :id AND kind = 'plug' LIMIT 1`, {
      replacements: { id: live.id },
      type: QueryTypes.SELECT,
    });
    const res = await crew.tech.post(`/api/permits/${live.id}/isolations/${plug.id}/remove`, { plugOutcome: 'blown_out' });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([{ path: 'plugOutcome', message: 'Say whether the plug was removed or left to be displaced by product.' }]);
    const other = await crew.control.post(`/api/permits/${live.id}/isolations/${plug.id}/acknowledge`, { what: 'everything' });
    expect(other.status).toBe(400);
    expect(other.body.error.details).toEqual([{ path: 'what', message: 'Choose one of the options offered.' }]);
    expect(JSON.stringify([res.body, other.body])).not.toMatch(/displaced_by_product|remote_inhibited|Invalid option/);
  });
});
