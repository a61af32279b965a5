// Live status and alarms (issue 18, "Live status and alarms on every open screen"): GET /api/stream
// follows named permits for anyone who may read them, tenant by tenant, and a browser that comes back
// replays what it missed from the audit trail (Last-Event-ID).
import { request as httpRequest, type ClientRequest } from 'node:http';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { LiveEvent, LiveReady } from '@shared/types/live';
import { runScheduler } from '../../server/src/modules/gas-tests/scheduler';
import { DEMO_PASSWORD, startTestServer, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, confirmChecklist, draftWithPlan, expectOk, signInCrew, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

interface Frame {
  id: string | null;
  event: string;
  data: string;
  at: number;
}

/** Reads a text/event-stream response into frames (id, event, data), so a test can wait for one. */
function openStream(url: string, cookie: string, lastEventId?: string) {
  const frames: Frame[] = [];
  let status = 0;
  let contentType = '';
  let body = '';
  let wake: (() => void) | null = null;
  const headers: Record<string, string> = { cookie, accept: 'text/event-stream' };
  if (lastEventId !== undefined) headers['last-event-id'] = lastEventId;
  const req: ClientRequest = httpRequest(url, { headers }, (res) => {
    status = res.statusCode ?? 0;
    contentType = res.headers['content-type'] ?? '';
    res.setEncoding('utf8');
    let buffer = '';
    res.on('data', (chunk: string) => {
      body += chunk;
      buffer += chunk;
      for (let cut = buffer.indexOf('\n\n'); cut >= 0; cut = buffer.indexOf('\n\n')) {
        const block = buffer.slice(0, cut);
        buffer = buffer.slice(cut + 2);
        const event = /^event: (.*)$/m.exec(block)?.[1];
        if (event) frames.push({ id: /^id: (.*)$/m.exec(block)?.[1] ?? null, event, data: /^data: (.*)$/m.exec(block)?.[1] ?? '', at: Date.now() });
      }
      wake?.();
    });
    res.on('end', () => wake?.());
  });
  req.on('error', () => undefined);
  req.end();
  const stream = {
    status: () => status,
    contentType: () => contentType,
    body: () => body,
    frames,
    /** The first frame of that name after index `from`, or a rejection after `timeoutMs`. */
    waitFor(name: string, from: number, timeoutMs: number, where: (f: Frame) => boolean = () => true) {
      return new Promise<Frame>((resolve, reject) => {
        const timer = setTimeout(() => {
          wake = null;
          reject(new Error(`no "${name}" frame within ${timeoutMs} ms; got ${JSON.stringify(frames.map((f) => `${f.event} ${f.data}`))} ${status} ${body.slice(0, 200)}`));
        }, timeoutMs);
        const look = () => {
          const hit = frames.slice(from).find((f) => f.event === name && where(f));
          if (!hit) return;
          clearTimeout(timer);
          wake = null;
          resolve(hit);
        };
        wake = look;
        look();
      });
    },
    /** Waits until the status line is in (for refusals, the whole JSON body). */
    async answered(timeoutMs = 5_000) {
      const until = Date.now() + timeoutMs;
      while (!status && Date.now() < until) await new Promise((r) => setTimeout(r, 20));
      await new Promise((r) => setTimeout(r, 50));
      return status;
    },
    changes: (from = 0) => frames.slice(from).filter((f) => f.event === 'change').map((f) => ({ id: f.id, ...(JSON.parse(f.data) as LiveEvent) })),
    close: () => req.destroy(),
  };
  return stream;
}

const pause = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('live status and alarms through GET /api/stream', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  const cookies: Record<string, string> = {};
  const q = <T extends object>(sql: string, replacements: Record<string, unknown> = {}) => srv.deps.sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT });
  const url = (...permitIds: string[]) => `${srv.baseUrl}/api/stream?${permitIds.map((id) => `permitId=${id}`).join('&')}`;
  const draft = async (title: string, overrides: Record<string, unknown> = {}, author = crew.lead) =>
    (await expectOk(await author.post('/api/permits', permitBody(ids, srv.clock.now(), { title, ...overrides })), 201)).id;
  /** An audit event on the permit that is announced at once: sent for approval, or sent back to draft. */
  const touch = async (id: string, client = crew.lead) => {
    const current = await expectOk(await client.get(`/api/permits/${id}`));
    if (current.state === 'draft') await expectOk(await transition(client, id, 'submit'));
    else await expectOk(await transition(crew.authoriser, id, 'reject', { reason: 'Live stream test: sent back.' }));
  };
  /** A permit of Harlow Ridge, made by its own authoriser. */
  async function harlowPermit() {
    const [t] = await q<{ pipe: string; org: string }>(
      `SELECT (SELECT p.id FROM pipelines p WHERE p.tenant_id = t.id ORDER BY p.code LIMIT 1) AS pipe,
              (SELECT o.id FROM organisations o WHERE o.tenant_id = t.id AND o.kind = 'contractor' ORDER BY o.name LIMIT 1) AS org
       FROM tenants t WHERE t.slug = 'harlowridge'`,
    );
    const harlow = await srv.signIn(users.otherTenant);
    const id = (await expectOk(await harlow.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Harlow Ridge work', pipelineId: t.pipe, contractorOrganisationId: t.org, fromPosition: 1, toPosition: 1.01 })), 201)).id;
    return { id, harlow };
  }

  let monitor = '';
  const clean = { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 };
  const gasAt = async (id: string, place: string) =>
    expectOk(await crew.tech.post(`/api/permits/${id}/gas-tests`, { instrumentId: monitor, place, testedAt: srv.clock.now().toISOString(), readings: clean }), 201);
  /** Hot work on the test plan, isolated, plug checked and tested clean, started. */
  async function livePermit() {
    const id = await draftWithPlan(srv, crew, ids, { title: 'Live stream: hot work' });
    await toAccepted(crew, id);
    await applyAndVerifyAll(srv, crew, ids, id);
    await confirmChecklist(crew.lead, id, 'checklist');
    await expectOk(await crew.authoriser.patch(`/api/instruments/${monitor}`, { lastBumpTestAt: srv.clock.now().toISOString() }));
    await expectOk(await crew.tech.post(`/api/permits/${id}/checks`, { checkedAt: srv.clock.now().toISOString(), kind: 'plug', face: 'intact' }), 201);
    await gasAt(id, 'inside_pipe_downstream');
    await gasAt(id, 'work_area');
    const started = await expectOk(await transition(crew.lead, id, 'start_work'));
    expect(started.state).toBe('live');
    return { id, number: String(started.number) };
  }

  async function cookieOf(email: string) {
    if (cookies[email]) return cookies[email];
    const csrf = await fetch(`${srv.baseUrl}/api/auth/csrf`);
    const token = (await csrf.json()).csrfToken as string;
    const jar = (r: Response) => r.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ');
    const res = await fetch(`${srv.baseUrl}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-csrf-token': token, cookie: jar(csrf) },
      body: JSON.stringify({ email, password: DEMO_PASSWORD }),
    });
    expect(res.status).toBe(200);
    return (cookies[email] = jar(res));
  }

  beforeAll(async () => {
    srv = await startTestServer({ env: { SESSION_IDLE_MINUTES: '3000', SESSION_ABSOLUTE_HOURS: '72' } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    monitor = (await q<{ id: string }>(`SELECT id FROM instruments WHERE tenant_id = :t AND serial = 'FG4-20731'`, { t: ids.tenantId }))[0].id;
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('finding 18.1: when a gas tester follows one permit, then its changes arrive within 2 s with the audit sequence as id, and another permit of the tenant or another tenant stays silent', async () => {
    const watchedId = await draft('Live stream: watched');
    const otherId = await draft('Live stream: not watched');
    const theirs = await harlowPermit();
    const stream = openStream(url(watchedId), await cookieOf(users.tech));
    try {
      const ready = await stream.waitFor('ready', 0, 5_000);
      expect(stream.status()).toBe(200);
      expect(stream.contentType()).toContain('text/event-stream');
      expect(stream.body()).toMatch(/^retry: \d+$/m);
      const start = JSON.parse(ready.data) as LiveReady;
      expect(start.permitIds).toEqual([watchedId]);
      expect(ready.id).toBe(String(start.seq));

      // Another tenant's change and another permit of this tenant first: neither may reach the stream.
      await expectOk(await transition(theirs.harlow, theirs.id, 'cancel', { reason: 'Harlow Ridge: moved to next week.' }));
      await touch(otherId);
      const sent = Date.now();
      await touch(watchedId);
      const change = await stream.waitFor('change', 0, 2_000);
      expect(change.at - sent).toBeLessThan(2_000);
      const event = JSON.parse(change.data) as LiveEvent;
      expect(event).toMatchObject({ action: 'submit', fromState: 'draft', toState: 'requested', permits: [{ id: watchedId }], alarm: null });
      expect(change.id).toBe(String(event.seq));
      const [stored] = await q<{ seq: string }>(`SELECT max(seq) AS seq FROM audit_events WHERE permit_id = :id`, { id: watchedId });
      expect(event.seq).toBe(Number(stored.seq));
      await pause(500);
      expect(stream.changes().map((c) => c.permits.map((p) => p.id))).toEqual([[watchedId]]);
      expect(stream.body()).not.toContain(otherId);
      expect(stream.body()).not.toContain(theirs.id);
      expect(stream.body()).not.toContain('Harlow');
    } finally {
      stream.close();
    }
  });

  it('finding 18.10: when the lead edits a draft (a change whose service announces nothing itself), then the edit still reaches the screen following it within 2 s', async () => {
    const id = await draft('Live stream: edited');
    const stream = openStream(url(id), await cookieOf(users.lead));
    try {
      await stream.waitFor('ready', 0, 5_000);
      const { version } = await expectOk(await crew.lead.get(`/api/permits/${id}`));
      const sent = Date.now();
      await expectOk(await crew.lead.patch(`/api/permits/${id}`, { title: 'Live stream: edited, new title', version }));
      const change = await stream.waitFor('change', 0, 2_000);
      expect(change.at - sent).toBeLessThan(2_000);
      expect((JSON.parse(change.data) as LiveEvent).permits.map((p) => p.id)).toEqual([id]);
    } finally {
      stream.close();
    }
  });

  it('finding 18.2: when someone names a permit they may not read (another contractor’s, another tenant’s, or none that exists), then it is left out of the stream, and a stream of only such permits is refused as not found', async () => {
    const [otherContractor] = await q<{ id: string }>(
      `INSERT INTO organisations (tenant_id, name, kind) VALUES (:t, 'Live Stream Test Welding', 'contractor') RETURNING id`,
      { t: ids.tenantId },
    );
    const hidden = await draft('Another contractor’s work', { contractorOrganisationId: otherContractor.id }, crew.authoriser);
    const mine = await draft('Oxbow work beside it');
    const theirs = await harlowPermit();
    const cookie = await cookieOf(users.tech);

    const mixed = openStream(url(mine, hidden, theirs.id), cookie);
    try {
      const ready = JSON.parse((await mixed.waitFor('ready', 0, 5_000)).data) as LiveReady;
      expect(ready.permitIds).toEqual([mine]);
      await touch(hidden, crew.authoriser);
      await expectOk(await transition(theirs.harlow, theirs.id, 'submit'));
      await touch(mine);
      await mixed.waitFor('change', 0, 2_000);
      await pause(400);
      expect(mixed.body()).not.toContain(hidden);
      expect(mixed.body()).not.toContain(theirs.id);
      expect(mixed.changes().every((c) => c.permits.every((p) => p.id === mine))).toBe(true);
    } finally {
      mixed.close();
    }

    for (const only of [[hidden], [theirs.id], ['7d1f1a52-6a4b-4c1e-9c8e-000000000000']]) {
      const refused = openStream(url(...only), cookie);
      expect(await refused.answered()).toBe(404);
      expect(JSON.parse(refused.body())).toMatchObject({ error: { code: 'not_found' } });
      expect(refused.body()).not.toContain(only[0]);
      refused.close();
    }
    // The authoriser reads every permit of the tenant, so the same list is followed whole.
    const all = openStream(url(mine, hidden), await cookieOf(users.authoriser));
    try {
      expect((JSON.parse((await all.waitFor('ready', 0, 5_000)).data) as LiveReady).permitIds.sort()).toEqual([mine, hidden].sort());
    } finally {
      all.close();
    }
  });

  it('finding 18.3: when the query is not a list of permit ids or the Last-Event-ID is not a sequence number, then it is refused with 400 in the error shape, naming the field', async () => {
    const cookie = await cookieOf(users.tech);
    const cases: { path: string; lastEventId?: string; field: string }[] = [
      { path: '/api/stream', field: 'permitId' },
      { path: '/api/stream?permitId=not-a-permit', field: 'permitId' },
      { path: `/api/stream?permitId=${ids.pipelineId}&role=admin`, field: 'role' },
      { path: `/api/stream?permitId=${ids.pipelineId}&after=-3`, field: 'after' },
      { path: `/api/stream?permitId=${ids.pipelineId}`, lastEventId: '12; DROP TABLE', field: '' },
    ];
    for (const c of cases) {
      const s = openStream(`${srv.baseUrl}${c.path}`, cookie, c.lastEventId);
      expect(await s.answered(), c.path).toBe(400);
      const body = JSON.parse(s.body());
      expect(body.error.code).toBe('validation_failed');
      expect(body.error.details.map((d: { path: string }) => d.path)).toContain(c.field);
      s.close();
    }
    const nobody = openStream(`${srv.baseUrl}/api/stream?permitId=${ids.pipelineId}`, '');
    expect(await nobody.answered()).toBe(401);
    nobody.close();
  });

  it('finding 18.4: when the phone comes back with Last-Event-ID, then the events it missed are replayed once each, in order, before the live ones, and none of another permit', async () => {
    const watchedId = await draft('Replay: watched');
    const otherId = await draft('Replay: not watched');
    const cookie = await cookieOf(users.tech);
    const first = openStream(url(watchedId), cookie);
    const ready = await first.waitFor('ready', 0, 5_000);
    await touch(watchedId);
    const seenLive = await first.waitFor('change', 0, 2_000);
    first.close();
    expect(Number(seenLive.id)).toBeGreaterThan(Number(ready.id));

    // Offline: three changes to the watched permit, one to another.
    await touch(watchedId);
    await touch(otherId);
    await touch(watchedId);
    await expectOk(await transition(crew.lead, watchedId, 'cancel', { reason: 'Replay test: work moved.' }));
    const missed = await q<{ seq: string }>(`SELECT seq FROM audit_events WHERE permit_id = :id AND seq > :after ORDER BY seq`, { id: watchedId, after: Number(seenLive.id) });
    expect(missed).toHaveLength(3);

    const back = openStream(url(watchedId), cookie, seenLive.id!);
    try {
      const again = await back.waitFor('ready', 0, 5_000);
      expect(again.id).toBe(seenLive.id);
      await back.waitFor('change', 0, 2_000, (f) => f.id === String(missed.at(-1)!.seq));
      const replayed = back.changes();
      expect(replayed.map((c) => c.id)).toEqual(missed.map((m) => String(m.seq)));
      expect(replayed.map((c) => c.action)).toEqual(['reject', 'submit', 'cancel']);
      expect(replayed.at(-1)).toMatchObject({ fromState: 'requested', toState: 'cancelled', reason: 'Replay test: work moved.' });
      // …then live: another permit's change wakes the stream, and nothing is sent twice.
      await touch(otherId);
      await pause(500);
      expect(back.changes().map((c) => c.id)).toEqual(missed.map((m) => String(m.seq)));
    } finally {
      back.close();
    }

    // The same through ?after= (a page that opens a new stream itself), and an id beyond the
    // tenant's head (another tenant's number) starts at the head: nothing invented, nothing replayed.
    const viaQuery = openStream(`${url(watchedId)}&after=${seenLive.id}`, cookie);
    try {
      await viaQuery.waitFor('change', 0, 2_000, (f) => f.id === String(missed.at(-1)!.seq));
      expect(viaQuery.changes().map((c) => c.id)).toEqual(missed.map((m) => String(m.seq)));
    } finally {
      viaQuery.close();
    }
    const beyond = openStream(url(watchedId), cookie, '999999999');
    try {
      const r = JSON.parse((await beyond.waitFor('ready', 0, 5_000)).data) as LiveReady;
      expect(r.seq).toBeLessThan(999999999);
      await pause(300);
      expect(beyond.changes()).toEqual([]);
    } finally {
      beyond.close();
    }
  });

  it('finding 18.5: when the control room suspends live work, then the stream carries a "suspended" alarm naming who stopped it; a failing gas test carries its own alarm', async () => {
    const live = await livePermit();
    const stream = openStream(url(live.id), await cookieOf(users.tech));
    try {
      await stream.waitFor('ready', 0, 5_000);
      const sent = Date.now();
      const suspended = await transition(crew.control, live.id, 'suspend', { reason: 'Product pressure rising at the upstream valve.' });
      expect(suspended.status, JSON.stringify(suspended.body)).toBe(200);
      const alarm = await stream.waitFor('change', 0, 2_000, (f) => (JSON.parse(f.data) as LiveEvent).alarm !== null);
      expect(alarm.at - sent).toBeLessThan(2_000);
      expect(JSON.parse(alarm.data)).toMatchObject({
        alarm: 'suspended', toState: 'suspended', permits: [{ id: live.id, number: live.number }], facts: { suspendedBy: 'control_room' }, reason: 'Product pressure rising at the upstream valve.',
      });

      const from = stream.frames.length;
      const failed = await crew.tech.post(`/api/permits/${live.id}/gas-tests`, {
        instrumentId: monitor, place: 'work_area', testedAt: srv.clock.now().toISOString(), readings: { o2Pct: 20.9, lelPct: 12, h2sPpm: 0, coPpm: 1 },
      });
      expect(failed.status, JSON.stringify(failed.body)).toBe(201);
      const gas = await stream.waitFor('change', from, 2_000, (f) => (JSON.parse(f.data) as LiveEvent).alarm === 'gas_test_failed');
      expect(JSON.parse(gas.data)).toMatchObject({ action: 'gas_test_recorded', facts: { verdict: 'fail', place: 'work_area' } });
    } finally {
      stream.close();
    }
  });

  it('finding 18.6: when the long-term isolation a permit works under fails its re-check, and when the scheduler finds the repeat gas test on hot work overdue, then the permit’s stream carries each alarm within 2 s', async () => {
    const live = await livePermit();
    const [cert] = await q<{ id: string }>(`SELECT certificate_id AS id FROM certificate_permits WHERE permit_id = :id AND released_at IS NULL`, { id: live.id });
    expect(cert, 'the isolations-in-place signature issued a certificate').toBeDefined();
    await expectOk(await crew.authoriser.post(`/api/certificates/${cert.id}/long-term`, { reason: 'Live stream test: the line stays shut.' }));
    const stream = openStream(url(live.id), await cookieOf(users.lead));
    try {
      await stream.waitFor('ready', 0, 5_000);
      let from = stream.frames.length;
      let sent = Date.now();
      await expectOk(await crew.tech.post(`/api/certificates/${cert.id}/rechecks`, { locksAndTagsIntact: false, valvesStillClosed: true, gaugeReading: 0, gaugeUnit: 'psig' }), 201);
      const failed = await stream.waitFor('change', from, 2_000, (f) => (JSON.parse(f.data) as LiveEvent).alarm !== null);
      expect(failed.at - sent).toBeLessThan(2_000);
      expect(JSON.parse(failed.data)).toMatchObject({ alarm: 'certificate_recheck_failed', permits: [{ id: live.id, number: live.number }], reason: 'a lock or tag is missing or damaged' });
      expect((JSON.parse(failed.data) as LiveEvent).facts.certificateNumber).toMatch(/^IC-/);

      // Hours later nobody has tested the atmosphere at the flame: the scheduler (the background worker) raises it.
      srv.clock.advanceMinutes(6 * 60);
      from = stream.frames.length;
      sent = Date.now();
      await runScheduler(srv.appDeps);
      const overdue = await stream.waitFor('change', from, 2_000, (f) => (JSON.parse(f.data) as LiveEvent).alarm === 'gas_test_overdue');
      expect(overdue.at - sent).toBeLessThan(2_000);
      expect(JSON.parse(overdue.data)).toMatchObject({ action: 'check_overdue', facts: { check: 'gas_test' }, permits: [{ id: live.id }] });
      // Hot work with its repeat test overdue past the (default, nil) grace is stopped by Holdpoint itself.
      const stopped = await stream.waitFor('change', from, 2_000, (f) => (JSON.parse(f.data) as LiveEvent).alarm === 'suspended');
      expect(JSON.parse(stopped.data)).toMatchObject({ toState: 'suspended', facts: { suspendedBy: 'system' } });
    } finally {
      stream.close();
    }
  });
});
