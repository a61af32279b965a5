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
