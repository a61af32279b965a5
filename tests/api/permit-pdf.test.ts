// Finding 7: the printed permit carries people's names as they are written, in any Latin, Greek or
// Cyrillic script, not with "?" for every letter outside Latin-1. The PDF is read back with pdftotext
// (Debian's poppler-utils, installed by the test bootstrap), as a reader or a search would see it.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, transition, users } from '../fixtures/permit-fixtures';
import { applyAndVerifyAll, draftWithPlan, expectOk, signInCrew, type Crew, type Ids } from '../fixtures/permit-journey';
import { QueryTypes } from 'sequelize';
import { formatInZone } from '@shared/time/zone';
import { positionText } from '@shared/permit/record-words';
import type { PermitDetail } from '@shared/types/permits';
import { seedDemo } from '../../server/src/demo';
import { loadTenantSettings } from '../../server/src/modules/tenants/tenant-settings';

const lead = 'Zoë Ó Briain';
const tech = 'Łukasz Wróblewski';
const authoriser = 'Αλέξης Παπαδόπουλος';

function pdfText(pdf: Buffer): string {
  const dir = mkdtempSync(join(tmpdir(), 'holdpoint-pdf-'));
  try {
    const file = join(dir, 'permit.pdf');
    writeFileSync(file, pdf);
    const r = spawnSync('pdftotext', ['-enc', 'UTF-8', file, '-'], { encoding: 'utf8' });
    if (r.error || r.status !== 0) throw new Error(`pdftotext failed (is poppler-utils installed?): ${r.error?.message ?? r.stderr}`);
    return r.stdout;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

async function download(client: ApiClient, id: string): Promise<Buffer> {
  const res = await client.agent
    .get(`/api/permits/${id}/pdf`)
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

describe('finding 7: the printed permit in Unicode', () => {
  let srv: TestServer;
  let crew: Crew;
  let ids: Ids;
  let permitId = '';

  beforeAll(async () => {
    srv = await startTestServer();
    // Renamed before anyone signs in, so sessions and signatures carry the new names.
    for (const [email, name] of [[users.lead, lead], [users.tech, tech], [users.authoriser, authoriser]])
      await srv.deps.sequelize.query(`UPDATE users SET name = :name WHERE email = :email`, { replacements: { name, email } });
    crew = await signInCrew(srv);
    ids = await demoIds(srv);
    permitId = await draftWithPlan(srv, crew, ids, { title: 'Replace the dented section at Ørsted crossing — O₂ ≥ 19.5 %' });
    await expectOk(await transition(crew.lead, permitId, 'submit'));
    await expectOk(await transition(crew.authoriser, permitId, 'approve', { password: 'holdpoint-demo', signedName: authoriser }));
    await expectOk(await transition(crew.lead, permitId, 'accept', { password: 'holdpoint-demo', signedName: lead }));
    await applyAndVerifyAll(srv, crew, ids, permitId);
  });
  afterAll(async () => {
    await srv?.close();
  });

  it('when the people on a permit are called Zoë Ó Briain, Łukasz Wróblewski and Αλέξης Παπαδόπουλος, then the printed permit names them exactly', async () => {
    const text = pdfText(await download(crew.lead, permitId)).normalize('NFC');
    for (const name of [lead, tech, authoriser]) expect(text).toContain(name);
    expect(text).toContain(`Requested by: ${lead}`);
    expect(text).toContain(`applied by ${tech}`);
    expect(text).toContain('Ørsted crossing');
    // Characters the font does not have are written out rather than dropped: subscript two and ≥.
    expect(text).toContain('O2 >= 19.5 %');
    expect(text).not.toMatch(/Zo\?|\?ukasz|\?\?\?/);
  });
});

// Issue 17: the printed permit holds the whole record, not the last 25 entries; every page says
// whose it is, which page of how many, and where the record stood in the audit chain; no code or
// machine time reaches the paper.
describe('issue 17: the printed permit holds the whole record', () => {
  let srv: TestServer;
  let crew: Crew;
  let permitId = '';

  beforeAll(async () => {
    srv = await startTestServer();
    // The demo's finished sleeve repair, with its whole trail, closed by the control room and the authoriser.
    await seedDemo(srv.deps.sequelize, { permits: true });
    crew = await signInCrew(srv);
    const [row] = await srv.deps.sequelize.query<{ id: string; state: string }>(`SELECT id, state FROM permits WHERE job_reference = 'BM-DEMO-0411'`, { type: QueryTypes.SELECT });
    permitId = row.id;
    if (row.state === 'returned_to_service') await expectOk(await transition(crew.control, permitId, 'acknowledge_return'));
    if ((await crew.authoriser.get(`/api/permits/${permitId}`)).body.state !== 'closed') await expectOk(await transition(crew.authoriser, permitId, 'close'));
  }, 120_000);
  afterAll(async () => {
    await srv?.close();
  });

  it('issue 17: when a closed demo permit with 70 or more events is printed, then every event, step, lock, gas test and signature is on it, with page n of m and the chain position on every page', async () => {
    const permit = (await crew.authoriser.get(`/api/permits/${permitId}`)).body as PermitDetail;
    expect(permit.state).toBe('closed');
    expect(permit.timeline.length).toBeGreaterThanOrEqual(70);
    const { timeZone, locationUnit } = await loadTenantSettings(srv.deps.sequelize, permit.tenantId);

    const started = performance.now();
    const pdf = await download(crew.authoriser, permitId);
    const ms = performance.now() - started;
    const text = pdfText(pdf).normalize('NFC');
    const flat = text.replace(/\s+/g, ' ');

    // Every entry of the audit trail, by its number and its time at the site.
    const missing = permit.timeline.filter((e) => !flat.includes(`No. ${e.seq} ${formatInZone(e.occurredAt, timeZone)}`));
    expect(missing.map((e) => `${e.seq} ${e.action}`)).toEqual([]);

    // Every page: the permit number, "page n of m" and the audit chain position of the permit's last event.
    const [last] = await srv.deps.sequelize.query<{ seq: string; hash: string }>(
      `SELECT a.seq::text AS seq, a.hash FROM audit_events a WHERE a.permit_id = :id ORDER BY a.seq DESC LIMIT 1`,
      { replacements: { id: permitId }, type: QueryTypes.SELECT },
    );
    const pages = text.split('\f').filter((page) => page.trim());
    expect(pages.length).toBeGreaterThan(1);
    pages.forEach((page, i) => {
      const line = page.replace(/\s+/g, ' ');
      expect(line).toContain(`Permit ${permit.number} - page ${i + 1} of ${pages.length} - audit trail up to entry no. ${last.seq}, hash ${last.hash.slice(0, 12)}`);
    });

    // The isolation steps with their lock and tag numbers and who applied, verified and removed each.
    const steps = await srv.deps.sequelize.query<{ label: string; lock: string | null; tag: string | null; applied: string; verified: string; removed: string }>(
      `SELECT coalesce(ip.tag_code, s.temp_label) AS label, l.number AS lock, t.number AS tag, ua.name AS applied, uv.name AS verified, ur.name AS removed
       FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.id = s.point_id LEFT JOIN locks l ON l.id = s.lock_id LEFT JOIN tags t ON t.id = s.tag_id
       JOIN users ua ON ua.id = s.applied_by JOIN users uv ON uv.id = s.verified_by JOIN users ur ON ur.id = s.removed_by
       WHERE s.permit_id = :id ORDER BY s.seq`,
      { replacements: { id: permitId }, type: QueryTypes.SELECT },
    );
    expect(steps.length).toBeGreaterThan(3);
    for (const s of steps) {
      expect(flat).toContain(s.label);
      if (s.lock) expect(flat).toContain(`lock ${s.lock}`);
      if (s.tag) expect(flat).toContain(`tag ${s.tag}`);
      expect(flat).toContain(`applied by ${s.applied}`);
      expect(flat).toContain(`verified by ${s.verified}`);
      expect(flat).toContain(`removed by ${s.removed}`);
    }
    expect(flat).toMatch(/As built .*?CST: [\d.]+ lb bentonite, [\d.]+ lb water, [\d.]+ in long/);
    expect(flat).toMatch(/proved dead/);

    // Every gas test, with units; the limits with their sources.
    const [{ n: gasTests }] = await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM gas_tests WHERE permit_id = :id`, { replacements: { id: permitId }, type: QueryTypes.SELECT });
    expect(flat.match(/: PASS - |: FAIL - /g)?.length).toBe(gasTests);
    for (const unit of ['% vol', '% LEL', 'ppm']) expect(flat).toContain(unit);
    expect(flat).toContain('Limits applied, and where each comes from');
    expect(flat).toMatch(/OSHA|NIOSH/);

    // Signatures, the current holder, positions as the site writes them.
    for (const s of permit.signatures) expect(flat).toContain(`${s.signedName}, ${formatInZone(s.signedAt, timeZone)}`);
    expect(flat).toContain(`Current holder: ${permit.holderName ?? 'nobody holds the permit now'}`);
    expect(flat).toContain(`from ${positionText(permit.fromPosition, locationUnit)} to ${positionText(permit.toPosition, locationUnit)}`);

    // Nothing a person cannot read: no machine time, no code with underscores, no arrow between codes.
    expect(text).not.toMatch(/\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/);
    expect(text).not.toMatch(/\b[a-z]+_[a-z_]+\b/);
    expect(text).not.toContain(' -> ');

    console.log(`issue 17: printed permit ${permit.number}: ${permit.timeline.length} events, ${pages.length} pages, ${pdf.length} bytes, ${Math.round(ms)} ms`);
    expect(ms).toBeLessThan(5000);
  });
});
