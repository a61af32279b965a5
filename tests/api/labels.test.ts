// Issue 18, labels in the field: the printed label sheet carries every lock and tag of a permit (read
// back with pdftotext, Debian's poppler-utils, as for the printed permit), and a scanned label opens
// the lock, the point it is on and the permit, inside the caller's tenant only.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { ScanResult } from '@shared/types/labels';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, inStore, signInCrew, steps, toAccepted, type Crew, type Ids } from '../fixtures/permit-journey';

function pdfText(pdf: Buffer): string {
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-labels-'));
  try {
    const file = join(dir, 'labels.pdf');
    writeFileSync(file, pdf);
    const r = spawnSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' });
    if (r.error || r.status !== 0) throw new Error(`pdftotext failed (is poppler-utils installed?): ${r.error?.message ?? r.stderr}`);
    return r.stdout;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

function pdfInfo(pdf: Buffer): { pages: number; size: string } {
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-labels-'));
  try {
    const file = join(dir, 'labels.pdf');
    writeFileSync(file, pdf);
    const r = spawnSync('pdfinfo', [file], { encoding: 'utf8' });
    return { pages: Number(/Pages:\s+(\d+)/.exec(r.stdout)?.[1] ?? 0), size: /Page size:\s+(.*)/.exec(r.stdout)?.[1] ?? '' };
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

async function download(client: ApiClient, url: string): Promise<{ status: number; type: string; disposition: string; body: Buffer }> {
  const res = await client.agent
    .get(url)
    .buffer(true)
    .parse((r, done) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => done(null, Buffer.concat(chunks)));
    });
  return { status: res.status, type: String(res.headers['content-type']), disposition: String(res.headers['content-disposition'] ?? ''), body: res.body as Buffer };
}

describe('issue 18: QR labels for locks and tags', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let outsider: ApiClient;
  let permitId = '';
  let permitNumber = '';
  let onPermit: { kind: 'lock' | 'tag'; id: string; number: string; point: string }[] = [];

  beforeAll(async () => {
    srv = await startTestServer();
    ids = await demoIds(srv);
    crew = await signInCrew(srv);
    outsider = await srv.signIn(users.otherTenant);
    permitId = await draftWithPlan(srv, crew, ids);
    await toAccepted(crew, permitId);
    // The valve and the vent each get a lock and a tag, so the permit has two of each.
    for (const step of await steps(crew.tech, permitId)) {
      const body: Record<string, unknown> = step.kind === 'plug' ? { asBuilt: { bentoniteLb: 31, waterLb: 31, lengthIn: 15.5 } } : { lockId: await inStore(srv, 'locks', ids.tenantId), tagId: await inStore(srv, 'tags', ids.tenantId) };
      await expectOk(await crew.tech.post(`/api/permits/${permitId}/isolations/${step.id}/apply`, body));
      srv.clock.advanceMinutes(1);
    }
    onPermit = await srv.deps.sequelize.query(
      `SELECT k.kind, k.id, k.number, s.temp_label AS point FROM isolation_steps s
         CROSS JOIN LATERAL (SELECT 'lock' AS kind, l.id, l.number FROM locks l WHERE l.id = s.lock_id UNION ALL SELECT 'tag', t.id, t.number FROM tags t WHERE t.id = s.tag_id) k
        WHERE s.permit_id = :permitId ORDER BY s.seq, k.kind`,
      { replacements: { permitId }, type: QueryTypes.SELECT },
    );
    [{ number: permitNumber }] = await srv.deps.sequelize.query<{ number: string }>(`SELECT number FROM permits WHERE id = :permitId`, { replacements: { permitId }, type: QueryTypes.SELECT });
  }, 120_000);
  afterAll(() => srv?.close());

  it("issue 18: when a permit's label sheet is downloaded, then it is an A4 PDF whose text holds every lock and tag number of the permit, the tenant and the permit", async () => {
    expect(onPermit.filter((x) => x.kind === 'lock')).toHaveLength(2);
    expect(onPermit.filter((x) => x.kind === 'tag')).toHaveLength(2);
    const res = await download(crew.tech, `/api/permits/${permitId}/labels`);
    expect(res.status).toBe(200);
    expect(res.type).toBe('application/pdf');
    expect(res.disposition).toContain(`${permitNumber}-labels.pdf`);
    expect(res.body.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    // A line that wraps on the label comes back on two lines; read it as one.
    const text = pdfText(res.body).replace(/\s+/g, ' ');
    for (const x of onPermit) expect(text, `${x.kind} ${x.number}`).toContain(x.number);
    expect(text).toContain('Bramblecote');
    expect(text).toContain('LOCK');
    expect(text).toContain('DANGER TAG');
    expect(text).toContain(`Permit ${permitNumber}, TEST-BV-1`);
    expect(pdfInfo(res.body)).toEqual({ pages: 1, size: expect.stringContaining('(A4)') });
  });

  it("issue 18: when the tenant's tag stock is printed, then every tag is on the sheet, 21 to a page, and a filter narrows it", async () => {
    const [{ n }] = await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM tags WHERE tenant_id = :t`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    const all = await download(crew.auditor, '/api/labels?kind=tag');
    expect(all.status).toBe(200);
    expect(all.type).toBe('application/pdf');
    const text = pdfText(all.body);
    for (const t of ids.tags) expect(text).toContain(t.number);
    expect(pdfInfo(all.body).pages).toBe(Math.ceil(n / 21));

    const applied = pdfText((await download(crew.auditor, '/api/labels?kind=lock&state=applied')).body);
    for (const x of onPermit.filter((o) => o.kind === 'lock')) expect(applied).toContain(x.number);
    const inStoreLock = ids.locks.find((l) => !onPermit.some((o) => o.id === l.id))!;
    expect(applied).not.toContain(`${inStoreLock.number}\n`);
  });

  it('issue 18: when the sheet is asked for with a wrong filter, or for a permit with no lock yet, then the answer is 400 or 422 in plain words, not a PDF', async () => {
    const bad = await crew.auditor.get('/api/labels?kind=padlock');
    expect(bad.status).toBe(400);
    expect(bad.body.error.details[0].path).toBe('kind');
    const unknown = await crew.auditor.get('/api/labels?kind=lock&copies=3');
    expect(unknown.status).toBe(400);
    const none = await crew.auditor.get('/api/labels?kind=lock&q=NO-SUCH-NUMBER');
    expect(none.status).toBe(400);
    expect(none.body.error.message).toMatch(/nothing to print/);
    const draft = await draftWithPlan(srv, crew, ids, { title: 'Labels: nothing applied yet' });
    const empty = await crew.lead.get(`/api/permits/${draft}/labels`);
    expect(empty.status).toBe(422);
    expect(empty.body.error.message).toMatch(/No lock or tag is recorded on this permit yet/);
  });

  it("issue 18: when a lock's label is scanned, then its point, step and permit are answered, by number in any case or by id", async () => {
    const lock = onPermit.find((x) => x.kind === 'lock' && x.point === 'TEST-BV-1')!;
    const byNumber = (await expectOk(await crew.tech.get(`/api/scan/lock/${encodeURIComponent(lock.number)}`))) as unknown as ScanResult;
    expect(byNumber).toMatchObject({ kind: 'lock', id: lock.id, number: lock.number, state: 'applied' });
    expect(byNumber.placement).toMatchObject({ pointLabel: 'TEST-BV-1', pipelineName: expect.any(String), step: { status: 'applied', kind: 'block_valve' }, permit: { id: permitId, number: permitNumber, state: 'accepted' } });
    const lower = (await expectOk(await crew.lead.get(`/api/scan/lock/${encodeURIComponent(lock.number.toLowerCase())}`))) as unknown as ScanResult;
    expect(lower.id).toBe(lock.id);
    const byId = (await expectOk(await crew.control.get(`/api/scan/lock/${lock.id}`))) as unknown as ScanResult;
    expect(byId.number).toBe(lock.number);
    const tag = onPermit.find((x) => x.kind === 'tag')!;
    const scannedTag = (await expectOk(await crew.auditor.get(`/api/scan/tag/${encodeURIComponent(tag.number)}`))) as unknown as ScanResult;
    expect(scannedTag.placement?.permit?.id).toBe(permitId);
  });

  it('issue 18: when a lock in the store is scanned, then it is answered with no placement; an unknown number is 404 and a malformed one 400', async () => {
    const spare = ids.locks.find((l) => !onPermit.some((o) => o.id === l.id))!;
    const res = (await expectOk(await crew.tech.get(`/api/scan/lock/${encodeURIComponent(spare.number)}`))) as unknown as ScanResult;
    expect(res.placement).toBeNull();
    const missing = await crew.tech.get('/api/scan/lock/NO-SUCH-LOCK');
    expect(missing.status).toBe(404);
    expect(missing.body.error.code).toBe('not_found');
    const bad = await crew.tech.get(`/api/scan/lock/${encodeURIComponent('two words')}`);
    expect(bad.status).toBe(400);
  });

  it("issue 18: when a lead of another contractor scans a lock on this contractor's permit, then the point is shown but neither the permit nor its step", async () => {
    const db = srv.deps.sequelize;
    const [org] = await db.query<{ id: string }>(`INSERT INTO organisations (tenant_id, name, kind) VALUES (:t, 'Labels Other Contractor', 'contractor') RETURNING id`, { replacements: { t: ids.tenantId }, type: QueryTypes.SELECT });
    const [person] = await db.query<{ id: string }>(
      `INSERT INTO users (email, name, password_hash) SELECT 'other-lead@labels.example', 'Other Lead', password_hash FROM users WHERE email = :lead RETURNING id`,
      { replacements: { lead: users.lead }, type: QueryTypes.SELECT },
    );
    await db.query(`INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:t, :org, :user, 'contractor_lead')`, { replacements: { t: ids.tenantId, org: org.id, user: person.id } });
    const other = await srv.signIn('other-lead@labels.example');
    const lock = onPermit.find((x) => x.kind === 'lock' && x.point === 'TEST-BV-1')!;
    const res = (await expectOk(await other.get(`/api/scan/lock/${encodeURIComponent(lock.number)}`))) as unknown as ScanResult;
    expect(res.placement).toMatchObject({ pointLabel: 'TEST-BV-1', step: null, permit: null });
    expect(JSON.stringify(res)).not.toContain(permitId);
    expect(JSON.stringify(res)).not.toContain(permitNumber);
    expect((await other.get(`/api/permits/${permitId}/labels`)).status).toBe(404);
  });

  it("issue 18: when another tenant's person scans this tenant's lock, by number or by id, or prints this permit's labels, then it is 404 and nothing of it is told", async () => {
    const lock = onPermit.find((x) => x.kind === 'lock')!;
    // Harlow Ridge has locks of its own; a number both tenants use opens Harlow Ridge's, never Bramblecote's.
    for (const code of [lock.id]) {
      const res = await outsider.get(`/api/scan/lock/${code}`);
      expect(res.status).toBe(404);
      expect(JSON.stringify(res.body)).not.toContain(lock.number);
    }
    const [ownNumber] = await srv.deps.sequelize.query<{ number: string }>(
      `SELECT l.number FROM locks l JOIN tenants t ON t.id = l.tenant_id WHERE t.slug = 'bramblecote' AND l.id = :id`,
      { replacements: { id: lock.id }, type: QueryTypes.SELECT },
    );
    const byNumber = await outsider.get(`/api/scan/lock/${encodeURIComponent(ownNumber.number)}`);
    if (byNumber.status === 200) expect((byNumber.body as ScanResult).id).not.toBe(lock.id);
    else expect(byNumber.status).toBe(404);
    expect(JSON.stringify(byNumber.body)).not.toContain(permitId);
    const sheet = await outsider.get(`/api/permits/${permitId}/labels`);
    expect(sheet.status).toBe(404);
  });
});
