import { expect, request, type APIRequestContext, type APIResponse } from '@playwright/test';
import pg from 'pg';
import { DEMO_PASSWORD } from './helpers';

export const names: Record<string, string> = {
  'lead@oxbow-repair.example': 'Rory Kilbride',
  'authoriser@bramblecote.example': 'Priya Castellan',
};

/** A demo user signed in over HTTP, sending the CSRF token the session was bound to on every change. */
export interface ApiUser {
  email: string;
  ctx: APIRequestContext;
  get: (path: string) => Promise<APIResponse>;
  post: (path: string, data?: unknown) => Promise<APIResponse>;
  put: (path: string, data?: unknown) => Promise<APIResponse>;
  patch: (path: string, data?: unknown) => Promise<APIResponse>;
  close: () => Promise<void>;
}

export async function apiAs(email: string): Promise<ApiUser> {
  const ctx = await request.newContext({ baseURL: process.env.E2E_BASE_URL });
  const { csrfToken } = await (await ctx.get('/api/auth/csrf')).json();
  const headers = { 'x-csrf-token': csrfToken as string };
  const signedIn = await ctx.post('/api/auth/sign-in', { headers, data: { email, password: DEMO_PASSWORD } });
  expect(signedIn.status(), await signedIn.text()).toBe(200);
  return {
    email,
    ctx,
    get: (path) => ctx.get(path),
    post: (path, data = {}) => ctx.post(path, { headers, data }),
    put: (path, data = {}) => ctx.put(path, { headers, data }),
    patch: (path, data = {}) => ctx.patch(path, { headers, data }),
    close: () => ctx.dispose(),
  };
}

export async function ok<T = Record<string, unknown>>(res: Promise<APIResponse> | APIResponse, status = 200): Promise<T> {
  const r = await res;
  expect(r.status(), await r.text()).toBe(status);
  return (await r.json()) as T;
}

/** Fires a permit event with the version just read; signed events carry the demo password and the user's name. */
export async function transition(user: ApiUser, permitId: string, event: string, extra: Record<string, unknown> = {}) {
  const { version } = await ok<{ version: number }>(user.get(`/api/permits/${permitId}`));
  const signed = ['approve', 'accept', 'confirm_isolated', 'hand_back', 'return_to_service'].includes(event) ? { password: DEMO_PASSWORD, signedName: names[user.email] } : {};
  return ok<{ state: string }>(user.post(`/api/permits/${permitId}/transitions`, { event, version, ...signed, ...extra }));
}

/**
 * A cold-work permit on the Cedar Run lateral (or another demo pipeline) whose plan is the given register
 * points, taken through request, approval and acceptance by the demo lead and authoriser: ready for its isolations.
 */
export async function acceptedPermit(
  title: string,
  tagCodes: string[],
  pipelineCode = 'BM-10',
  /** Plan steps after the register points: temporary ones (`tempLabel`, `tempPosition`), a plug, say. */
  extraSteps: Record<string, unknown>[] = [],
): Promise<{ id: string; number: string }> {
  const lead = await apiAs('lead@oxbow-repair.example');
  const authoriser = await apiAs('authoriser@bramblecote.example');
  try {
    const me = await ok<{ memberships: { role: string; organisationId: string }[] }>(lead.get('/api/auth/me'));
    const contractorOrganisationId = me.memberships.find((m) => m.role === 'contractor_lead')!.organisationId;
    const pipes = await ok<{ items: { id: string; code: string }[] }>(lead.get(`/api/pipelines?q=${pipelineCode}&pageSize=50`));
    const pipelineId = pipes.items.find((p) => p.code === pipelineCode)!.id;
    const points = await ok<{ items: { id: string; tagCode: string; kind: string; position: number }[] }>(lead.get(`/api/isolation-points?pipelineId=${pipelineId}&pageSize=200`));
    const chosen = tagCodes.map((code) => points.items.find((p) => p.tagCode === code)!);
    const now = Date.now();
    const created = await ok<{ id: string; number: string; version: number }>(
      lead.post('/api/permits', {
        kinds: ['cold_work'],
        title,
        scope: 'Repack the valve stem and check the operator.',
        pipelineId,
        fromPosition: chosen[0].position,
        toPosition: chosen[0].position,
        methodStatement: 'Close, lock and tag the valve; bleed the body; repack; test; restore.',
        hazards: 'Trapped pressure in the valve body.',
        ppe: ['Gloves', 'Safety glasses'],
        validFrom: new Date(now - 60_000).toISOString(),
        validTo: new Date(now + 8 * 3600_000).toISOString(),
        contractorOrganisationId,
      }),
      201,
    );
    const kindOf: Record<string, string> = { block_valve: 'block_valve', vent: 'vent', drain: 'drain' };
    await ok(lead.put(`/api/permits/${created.id}/isolations`, { version: created.version, steps: [...chosen.map((p) => ({ pointId: p.id, kind: kindOf[p.kind] })), ...extraSteps] }));
    await transition(lead, created.id, 'submit');
    await transition(authoriser, created.id, 'approve');
    expect((await transition(lead, created.id, 'accept')).state).toBe('accepted');
    return { id: created.id, number: created.number };
  } finally {
    await lead.close();
    await authoriser.close();
  }
}

/**
 * This server runs on the real clock, so a hold test is not waited out: its first reading is moved
 * back by the hold time in the database (the owner's connection), as if it had been taken then.
 */
export async function holdTestAsIfWaited(permitId: string) {
  const db = new pg.Client({ connectionString: process.env.E2E_DATABASE_URL });
  await db.connect();
  try {
    await db.query(`UPDATE isolation_provings SET started_at = started_at - make_interval(mins => hold_minutes + 1) WHERE permit_id = $1 AND result = 'running'`, [permitId]);
  } finally {
    await db.end();
  }
}

/**
 * HSE HSG253 and HSG250: the second technician, who applied none of the isolating devices, holds the
 * section dead at the plan's first vent or drain; then the authoriser signs the isolations in place.
 */
export async function proveAndSign(permitId: string) {
  const [tech2, authoriser] = await Promise.all(['tech2@oxbow-repair.example', 'authoriser@bramblecote.example'].map(apiAs));
  try {
    const plan = await ok<{ items: { id: string; kind: string }[] }>(tech2.get(`/api/permits/${permitId}/isolations`));
    const bleed = plan.items.find((s) => s.kind === 'vent' || s.kind === 'drain')!;
    const test = await ok<{ id: string }>(tech2.post(`/api/permits/${permitId}/isolations/provings`, { stepId: bleed.id, reading: 0, unit: 'psig' }), 201);
    await holdTestAsIfWaited(permitId);
    expect((await ok<{ result: string }>(tech2.post(`/api/permits/${permitId}/isolations/provings/${test.id}/end`, { reading: 0 }))).result).toBe('proved');
    expect((await transition(authoriser, permitId, 'confirm_isolated')).state).toBe('isolated');
  } finally {
    await Promise.all([tech2, authoriser].map((u) => u.close()));
  }
}

/**
 * The demo's in-date four-gas monitor (FG4-20731), bump-tested today as the authoriser records it on
 * the Instruments page, so a gas test may be recorded with it. Opens its own session unless given one.
 */
export async function bumpTestedMonitor(authoriser?: ApiUser): Promise<{ id: string; serial: string }> {
  const user = authoriser ?? (await apiAs('authoriser@bramblecote.example'));
  try {
    const instruments = await ok<{ items: { id: string; serial: string }[] }>(user.get('/api/instruments'));
    const monitor = instruments.items.find((i) => i.serial === 'FG4-20731')!;
    // Two minutes back, so a test timed to the minute on a form still comes after it.
    await ok(user.patch(`/api/instruments/${monitor.id}`, { lastBumpTestAt: new Date(Date.now() - 2 * 60_000).toISOString() }));
    return monitor;
  } finally {
    if (!authoriser) await user.close();
  }
}

/**
 * An accepted permit (see acceptedPermit) taken live through the API as the crew would: each step
 * applied by the technician and verified by the second technician (the control room confirming
 * remote operation is inhibited), the section proved dead and the isolations signed in place (proveAndSign),
 * the before-work checklist confirmed by the lead, the demo monitor
 * bump-tested by the authoriser, a passing gas test by the gas tester, and work started by the lead.
 */
export async function livePermit(title: string, tagCodes: string[]): Promise<{ id: string; number: string }> {
  const permit = await acceptedPermit(title, tagCodes);
  await takeLive(permit.id);
  return permit;
}

/** An accepted permit taken live as livePermit does; steps already applied or verified (through the screens, say) are left as they are. */
export async function takeLive(permitId: string) {
  const permit = { id: permitId };
  const [lead, authoriser, tech, tech2, control] = await Promise.all(
    ['lead@oxbow-repair.example', 'authoriser@bramblecote.example', 'tech@oxbow-repair.example', 'tech2@oxbow-repair.example', 'control@bramblecote.example'].map(apiAs),
  );
  try {
    const plan = await ok<{ items: { id: string; kind: string; remotelyOperable: boolean; status: string; remoteAckAt: string | null }[] }>(tech.get(`/api/permits/${permit.id}/isolations`));
    for (const step of plan.items) {
      if (step.status === 'verified') continue;
      const body: Record<string, unknown> = {};
      if (step.kind === 'block_valve' || step.kind === 'isolator') {
        const [lock] = (await ok<{ items: { id: string }[] }>(tech.get('/api/locks?state=in_store&pageSize=1'))).items;
        const [tag] = (await ok<{ items: { id: string }[] }>(tech.get('/api/tags?state=in_store&pageSize=1'))).items;
        Object.assign(body, { lockId: lock.id, tagId: tag.id });
      }
      if (step.kind === 'plug') body.asBuilt = { bentoniteLb: 31, waterLb: 31, lengthIn: 15.5 };
      if (step.status === 'planned') await ok(tech.post(`/api/permits/${permit.id}/isolations/${step.id}/apply`, body));
      if (step.remotelyOperable && !step.remoteAckAt) await ok(control.post(`/api/permits/${permit.id}/isolations/${step.id}/acknowledge`, { what: 'remote_inhibited' }));
      await ok(tech2.post(`/api/permits/${permit.id}/isolations/${step.id}/verify`, { method: 'position_checked' }));
    }
    await proveAndSign(permit.id);
    const current = await ok<{ state: string; checklist: { key: string }[] }>(lead.get(`/api/permits/${permit.id}`));
    expect(current.state).toBe('isolated');
    for (const item of current.checklist) await ok(lead.post(`/api/permits/${permit.id}/checklist`, { list: 'checklist', key: item.key, confirmed: true }));
    const monitor = await bumpTestedMonitor(authoriser);
    const test = await ok<{ verdict: string }>(
      tech.post(`/api/permits/${permit.id}/gas-tests`, { instrumentId: monitor.id, place: 'work_area', purpose: 'before_work', testedAt: new Date().toISOString(), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 } }),
      201,
    );
    expect(test.verdict).toBe('pass');
    // A plug in the plan: the atmosphere inside the pipe on both sides of it is tested before work starts too.
    if (plan.items.some((s) => s.kind === 'plug')) {
      for (const place of ['inside_pipe_upstream', 'inside_pipe_downstream']) {
        await ok(tech.post(`/api/permits/${permit.id}/gas-tests`, { instrumentId: monitor.id, place, purpose: 'before_work', testedAt: new Date().toISOString(), readings: { o2Pct: 20.9, lelPct: 0, h2sPpm: 0, coPpm: 1 } }), 201);
      }
    }
    expect((await transition(lead, permit.id, 'start_work')).state).toBe('live');
  } finally {
    await Promise.all([lead, authoriser, tech, tech2, control].map((u) => u.close()));
  }
}
