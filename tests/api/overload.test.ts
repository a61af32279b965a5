// Under overload PostgreSQL cancels a statement that runs past its timeout (57014, query_canceled). The
// answer is "busy, try again" (503 with Retry-After) in the one error shape, never a 500, and nothing of
// the request is written. The cancel is real: PostgreSQL's own cancel of the waiting statement, which
// raises the same error a statement timeout does.
import pg from 'pg';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, transition } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';

describe('finding PERF-4b: a statement cancelled under overload', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let appRole: pg.Client;

  beforeAll(async () => {
    srv = await startTestServer();
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    // The app's own role: a role may see and cancel its own sessions' statements.
    const appUrl = new URL(srv.databaseUrl);
    appUrl.username = inject('dbAppRole').role;
    appUrl.password = encodeURIComponent(inject('dbAppRole').password);
    appRole = new pg.Client({ connectionString: appUrl.toString() });
    await appRole.connect();
  });
  afterAll(async () => {
    await appRole?.end();
    await srv?.close();
  });

  it('when a send for approval waits on a locked permit and PostgreSQL cancels its statement, then the answer is 503 with Retry-After in the error shape, the permit and its trail are unchanged, and the same request later succeeds', async () => {
    const id = await draftWithPlan(srv, crew, ids, { title: 'Sleeve at MP 41', fromPosition: 41.0, toPosition: 41.1 });
    const before = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    const database = new URL(srv.databaseUrl).pathname.slice(1);

    // Another writer holds the permit's row, so the request's SELECT … FOR UPDATE waits.
    const holder = new pg.Client({ connectionString: srv.databaseUrl });
    await holder.connect();
    try {
      await holder.query('BEGIN');
      await holder.query('SELECT 1 FROM permits WHERE id = $1 FOR UPDATE', [id]);
      const pending = crew.lead.post(`/api/permits/${id}/transitions`, { event: 'submit', version: before.version }).then((r) => r);
      let waiting: number | undefined;
      await expect
        .poll(
          async () => {
            const { rows } = await appRole.query<{ pid: number }>(
              `SELECT pid FROM pg_stat_activity WHERE datname = $1 AND usename = current_user AND wait_event_type = 'Lock'`,
              [database],
            );
            waiting = rows[0]?.pid;
            return rows.length;
          },
          { timeout: 10_000 },
        )
        .toBe(1);
      await appRole.query('SELECT pg_cancel_backend($1)', [waiting]);
      const res = await pending;
      expect(res.status, JSON.stringify(res.body)).toBe(503);
      expect(res.headers['retry-after']).toBe('5');
      expect(res.body.error).toEqual({ code: 'service_unavailable', message: expect.stringContaining('Try again in a few seconds'), details: [] });
      expect(JSON.stringify(res.body)).not.toMatch(/cancel|statement|SELECT/i);
    } finally {
      await holder.query('ROLLBACK').catch(() => undefined);
      await holder.end();
    }

    const after = await expectOk(await crew.lead.get(`/api/permits/${id}`));
    expect({ state: after.state, version: after.version }).toEqual({ state: 'draft', version: before.version });
    const events = await srv.deps.sequelize.query<{ action: string }>(`SELECT action FROM audit_events WHERE permit_id = :id ORDER BY seq`, { replacements: { id }, type: QueryTypes.SELECT });
    expect(events.map((e) => e.action)).not.toContain('submit');

    expect((await expectOk(await transition(crew.lead, id, 'submit'))).state).toBe('requested');
  });
});
