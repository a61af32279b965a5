// Issue 21, the dossier: one PDF per permit with the whole record. Read back with pdftotext and
// pdfimages (Debian's poppler-utils, installed by the test bootstrap), as a reader or a search would.
import { spawnSync } from 'node:child_process';
import { createHash, randomUUID } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import QRCode from 'qrcode';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { formatInZone } from '@shared/time/zone';
import type { DossierJob } from '@shared/types/dossier';
import type { PermitDetail } from '@shared/types/permits';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, transition, users } from '../fixtures/permit-fixtures';
import { draftWithPlan, expectOk, signInCrew, type Crew } from '../fixtures/permit-journey';
import { seedDemo } from '../../server/src/demo';
import { objectStorage } from '../../server/src/lib/storage';
import { storageKey } from '../../server/src/modules/attachments/attachments.service';
import { loadTenantSettings } from '../../server/src/modules/tenants/tenant-settings';

function poppler(tool: 'pdftotext' | 'pdfimages', args: string[], pdf: Buffer): string {
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-dossier-'));
  try {
    const file = join(dir, 'dossier.pdf');
    writeFileSync(file, pdf);
    const r = spawnSync(tool, [...args, file, ...(tool === 'pdftotext' ? ['-'] : [])], { encoding: 'utf8' });
    if (r.error || r.status !== 0) throw new Error(`${tool} failed (is poppler-utils installed?): ${r.error?.message ?? r.stderr}`);
    return r.stdout;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
const pdfText = (pdf: Buffer) => poppler('pdftotext', ['-enc', 'UTF-8'], pdf).normalize('NFC');
/** The pictures drawn in the PDF ("image" rows of `pdfimages -list`; an "smask" row is a picture's transparency, not a picture). */
const imageCount = (pdf: Buffer) =>
  poppler('pdfimages', ['-list'], pdf)
    .split('\n')
    .slice(2)
    .filter((line) => line.trim().split(/\s+/)[2] === 'image').length;

async function download(client: ApiClient, url: string): Promise<Buffer> {
  const res = await client.agent
    .get(url)
    .buffer(true)
    .parse((r, done) => {
      const chunks: Buffer[] = [];
      r.on('data', (c: Buffer) => chunks.push(c));
      r.on('end', () => done(null, Buffer.concat(chunks)));
    });
  expect(res.status).toBe(200);
  expect(res.headers['content-type']).toBe('application/pdf');
  return res.body as Buffer;
}

const start = (client: ApiClient, permitId: string) => client.agent.post(`/api/permits/${permitId}/dossier`).set('x-csrf-token', client.csrf).send({});

describe('issue 21: the permit dossier', () => {
  let srv: TestServer;
  let crew: Crew;
  let permitId = '';
  let tenantId = '';
  const docBytes = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n', 'latin1');

  /** Stores a file on a permit as the upload would (closed permits take no uploads, so the test arranges it directly). */
  async function attach(onPermit: string, bytes: Buffer, name: string, contentType: string) {
    const id = randomUUID();
    const key = storageKey(tenantId, onPermit, id);
    await objectStorage(srv.deps.config).put(key, bytes, contentType);
    const [lead] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { replacements: { email: users.lead }, type: QueryTypes.SELECT });
    await srv.deps.sequelize.query(
      `INSERT INTO attachments (id, tenant_id, permit_id, entity_type, entity_id, original_name, stored_name, content_type, size_bytes, sha256, uploaded_by, created_at)
       VALUES (:id, :tenantId, :permitId, 'permit', :permitId, :name, :key, :contentType, :size, :sha, :by, :at)`,
      { replacements: { id, tenantId, permitId: onPermit, name, key, contentType, size: bytes.length, sha: createHash('sha256').update(bytes).digest('hex'), by: lead.id, at: srv.clock.now() } },
    );
    return createHash('sha256').update(bytes).digest('hex');
  }

  beforeAll(async () => {
    srv = await startTestServer();
    await seedDemo(srv.deps.sequelize, { permits: true });
    crew = await signInCrew(srv);
    const [row] = await srv.deps.sequelize.query<{ id: string; state: string; tenant_id: string }>(`SELECT id, state, tenant_id FROM permits WHERE job_reference = 'BM-DEMO-0411'`, {
      type: QueryTypes.SELECT,
    });
    permitId = row.id;
    tenantId = row.tenant_id;
    if (row.state === 'returned_to_service') await expectOk(await transition(crew.control, permitId, 'acknowledge_return'));
    if ((await crew.authoriser.get(`/api/permits/${permitId}`)).body.state !== 'closed') await expectOk(await transition(crew.authoriser, permitId, 'close'));
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('issue 21: when an auditor asks for the dossier of a closed demo permit, then every event, signature and gas reading is in it, with the charts, the photos embedded, documents with their SHA-256 and the signed checkpoint', async () => {
    const permit = (await crew.auditor.get(`/api/permits/${permitId}`)).body as PermitDetail;
    expect(permit.state).toBe('closed');
    const [{ n: already }] = await srv.deps.sequelize.query<{ n: number }>(
      `SELECT count(*)::int AS n FROM attachments WHERE permit_id = :permitId AND content_type IN ('image/png', 'image/jpeg')`,
      { replacements: { permitId }, type: QueryTypes.SELECT },
    );
    // The demo permit has no photo of its own: a site photo and a document are attached first.
    const photoSha = await attach(permitId, await QRCode.toBuffer('site photo: sleeve fitted', { width: 240 }), 'sleeve fitted.png', 'image/png');
    const docSha = await attach(permitId, docBytes, 'weld inspection report.pdf', 'application/pdf');
    const photos = already + 1;

    const started = performance.now();
    const res = await start(crew.auditor, permitId);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    const job = res.body as DossierJob;
    expect(job).toMatchObject({ permitId, state: 'done', progress: 100 });
    const pdf = await download(crew.auditor, job.downloadUrl!);
    const ms = performance.now() - started;
    const text = pdfText(pdf);
    const flat = text.replace(/\s+/g, ' ');
    const { timeZone } = await loadTenantSettings(srv.deps.sequelize, tenantId);
    const when = (d: string | Date) => formatInZone(d, timeZone);

    // Every entry of the audit trail, by its number and its time at the site.
    expect(permit.timeline.length).toBeGreaterThanOrEqual(70);
    const missingEvents = permit.timeline.filter((e) => !flat.includes(`No. ${e.seq} ${when(e.occurredAt)}`));
    expect(missingEvents.map((e) => `${e.seq} ${e.action}`)).toEqual([]);

    // Every signature, with the name as signed and the time.
    expect(permit.signatures.length).toBeGreaterThan(0);
    const missingSignatures = permit.signatures.filter((s) => !flat.includes(`${s.signedName}, ${when(s.signedAt)}`));
    expect(missingSignatures).toEqual([]);

    // Every gas reading, on its test's line.
    const gas = await srv.deps.sequelize.query<{ tested_at: Date; readings: Record<string, number | null> }>(
      `SELECT tested_at, readings FROM gas_tests WHERE permit_id = :permitId ORDER BY tested_at`,
      { replacements: { permitId }, type: QueryTypes.SELECT },
    );
    expect(gas.length).toBeGreaterThan(0);
    const names: Record<string, string> = { o2Pct: 'O2', lelPct: 'Flammable', h2sPpm: 'H2S', coPpm: 'CO' };
    const missingReadings: string[] = [];
    for (const g of gas) {
      const at = flat.indexOf(`${when(g.tested_at)}, `);
      const line = at < 0 ? '' : flat.slice(at, at + 400);
      for (const [key, value] of Object.entries(g.readings))
        if (value !== null && names[key] && !line.includes(`${names[key]} ${value} `)) missingReadings.push(`${when(g.tested_at)} ${key} ${value}`);
    }
    expect(missingReadings).toEqual([]);

    // The charts with their limits, the certificates' section, the attachments and the checkpoint.
    expect(flat).toContain('Gas readings charted');
    expect(flat).toMatch(/limit: (at most|at least|\d)/);
    expect(flat).toContain('Isolation certificates');
    const certs = await srv.deps.sequelize.query<{ number: string }>(
      `SELECT DISTINCT c.number FROM isolation_certificates c LEFT JOIN certificate_permits x ON x.tenant_id = c.tenant_id AND x.certificate_id = c.id
       WHERE c.issued_for_permit_id = :permitId OR x.permit_id = :permitId`,
      { replacements: { permitId }, type: QueryTypes.SELECT },
    );
    for (const c of certs) expect(flat).toContain(`Certificate ${c.number}`);
    expect(flat).toContain(`SHA-256 ${photoSha}`);
    expect(flat).toContain(`SHA-256 ${docSha}`);
    expect(flat).toContain('weld inspection report.pdf');
    const [checkpoint] = await srv.deps.sequelize.query<{ seq: string; hash: string; signature: string }>(
      `SELECT seq::text AS seq, hash, signature FROM audit_checkpoints WHERE tenant_id = :tenantId ORDER BY signed_at DESC, seq DESC LIMIT 1`,
      { replacements: { tenantId }, type: QueryTypes.SELECT },
    );
    expect(Number(checkpoint.seq)).toBeGreaterThanOrEqual(Math.max(...permit.timeline.map((e) => Number(e.seq))));
    expect(flat).toContain(`Hash: ${checkpoint.hash}`);

    // The photos embedded: each one, besides the two QR codes (the live record and the signed checkpoint).
    expect(imageCount(pdf)).toBe(photos + 2);

    // Every page: the permit number, page n of m and the checkpoint.
    const pages = text.split('\f').filter((page) => page.trim());
    pages.forEach((page, i) => {
      expect(page.replace(/\s+/g, ' ')).toContain(`Permit ${permit.number} - page ${i + 1} of ${pages.length} - dossier - signed checkpoint at entry no. ${checkpoint.seq}, hash ${checkpoint.hash.slice(0, 12)}`);
    });
    // Times are the site's with the zone; the only machine time is inside the exact text the checkpoint signed.
    expect(flat.replace(/Signed text: \{[^}]*\}/, '')).not.toMatch(/\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/);
    console.info(`dossier of ${permit.number}: ${permit.timeline.length} events, ${gas.length} gas tests, ${pages.length} pages, ${(pdf.length / 1024).toFixed(0)} kB in ${ms.toFixed(0)} ms`);
  });

  it('issue 21: when a permit has many photos, then the dossier is built in the background and its progress is reported until it is ready', async () => {
    const [other] = await srv.deps.sequelize.query<{ id: string }>(
      `SELECT id FROM permits WHERE tenant_id = :tenantId AND id <> :permitId AND state NOT IN ('draft') ORDER BY number LIMIT 1`,
      { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
    );
    const count = 24;
    for (let i = 0; i < count; i++) await attach(other.id, await QRCode.toBuffer(`photo ${i} of the excavation`, { width: 600 }), `excavation ${i + 1}.png`, 'image/png');

    const res = await start(crew.authoriser, other.id);
    expect(res.status, JSON.stringify(res.body)).toBe(202);
    let job = res.body as DossierJob;
    expect(job.state).toBe('running');
    const seen: number[] = [job.progress];
    const stages = new Set<string>([job.stage]);
    const deadline = Date.now() + 60_000;
    while (job.state === 'running' && Date.now() < deadline) {
      const r = await crew.auditor.get(`/api/permits/${other.id}/dossier/${job.id}`);
      expect(r.status).toBe(200);
      job = r.body as DossierJob;
      seen.push(job.progress);
      stages.add(job.stage);
    }
    expect(job.state).toBe('done');
    // It moved forward only, was seen part-way, and ended at 100.
    expect(seen).toEqual([...seen].sort((a, b) => a - b));
    expect(seen.some((p) => p > 0 && p < 100)).toBe(true);
    expect(seen.at(-1)).toBe(100);
    expect([...stages].some((s) => /^Reading photo \d+ of 24$/.test(s))).toBe(true);
    const pdf = await download(crew.auditor, job.downloadUrl!);
    expect(imageCount(pdf)).toBe(count + 2);
    console.info(`background dossier: ${count} photos, ${seen.length} progress answers, values ${[...new Set(seen)].join(', ')}`);
  }, 120_000);

  it('issue 21: when someone from another tenant, or with a wrong job, asks for a dossier, then it is not found; a malformed id is refused with 400', async () => {
    const mine = (await start(crew.authoriser, permitId)).body as DossierJob;
    const stranger = await srv.signIn(users.otherTenant);
    expect((await start(stranger, permitId)).status).toBe(404);
    const theirs = await stranger.get(`/api/permits/${permitId}/dossier/${mine.id}`);
    expect(theirs.status).toBe(404);
    expect(theirs.body.error.code).toBe('not_found');
    expect((await stranger.get(`/api/permits/${permitId}/dossier/${mine.id}/pdf`)).status).toBe(404);
    // The right job under another permit's address is not found either.
    const [other] = await srv.deps.sequelize.query<{ id: string }>(`SELECT id FROM permits WHERE tenant_id = :tenantId AND id <> :permitId LIMIT 1`, {
      replacements: { tenantId, permitId },
      type: QueryTypes.SELECT,
    });
    expect((await crew.auditor.get(`/api/permits/${other.id}/dossier/${mine.id}`)).status).toBe(404);
    const bad = await crew.auditor.get(`/api/permits/${permitId}/dossier/not-a-job`);
    expect(bad.status).toBe(400);
    expect(bad.body.error.code).toBe('validation_failed');
    // Anything sent with the request is refused, naming the field.
    const extra = await crew.auditor.post(`/api/permits/${permitId}/dossier`, { includeDrafts: true });
    expect(extra.status).toBe(400);
    expect(extra.body.error.details).toEqual([expect.objectContaining({ path: 'includeDrafts' })]);
  });

  it('issue 21: when a dossier is asked for a draft, then it is refused in plain words and no build is started', async () => {
    const draftId = await draftWithPlan(srv, crew, await demoIds(srv));
    const res = await start(crew.authoriser, draftId);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/is still a draft: it has no record for a dossier yet\. Use Print permit instead\.$/);
    const [{ n }] = await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM dossier_jobs WHERE permit_id = :draftId`, {
      replacements: { draftId },
      type: QueryTypes.SELECT,
    });
    expect(n).toBe(0);
  });

  it('issue 21: when the dossier is asked for before it is ready, then the answer says so in plain words and sends no file', async () => {
    const [row] = await srv.deps.sequelize.query<{ id: string }>(
      `INSERT INTO dossier_jobs (tenant_id, permit_id, requested_by, state, progress, stage, started_at, updated_at)
       SELECT tenant_id, id, requester_user_id, 'running', 40, 'Reading photo 3 of 9', :now, :now FROM permits WHERE id = :permitId RETURNING id`,
      { replacements: { permitId, now: srv.clock.now() }, type: QueryTypes.SELECT },
    );
    const early = await crew.auditor.get(`/api/permits/${permitId}/dossier/${row.id}/pdf`);
    expect(early.status).toBe(409);
    expect(early.body.error.message).toBe('The dossier is not ready yet (40 %). Wait for it to finish.');
    // A build whose process died stops showing as running after ten minutes without progress.
    srv.clock.advanceMinutes(11);
    const stalled = await crew.auditor.get(`/api/permits/${permitId}/dossier/${row.id}`);
    expect(stalled.body).toMatchObject({ state: 'failed', error: 'The build stopped before it finished. Start the dossier again.' });
  });
});
