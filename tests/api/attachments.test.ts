import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { crc32, deflateSync } from 'node:zlib';
import { QueryTypes } from 'sequelize';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { demoIds, permitBody, transition, users } from '../fixtures/permit-fixtures';

// ---- bytes made here, so each test says exactly what it sends ----------------------------------

/** A real 1×1 PNG: signature, IHDR, IDAT, IEND, each chunk with its CRC (PNG specification, ISO/IEC 15948). */
function png(padTo = 0): Buffer {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4);
    len.writeUInt32BE(data.length);
    const body = Buffer.concat([Buffer.from(type, 'ascii'), data]);
    const crc = Buffer.alloc(4);
    crc.writeUInt32BE(crc32(body));
    return Buffer.concat([len, body, crc]);
  };
  const ihdr = Buffer.from([0, 0, 0, 1, 0, 0, 0, 1, 8, 2, 0, 0, 0]);
  const pixels = deflateSync(Buffer.from([0, 0x2f, 0x6b, 0x4f]));
  const parts = [Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', pixels)];
  // A text chunk pads the file to a given size while keeping it a valid PNG.
  const bare = parts.reduce((n, b) => n + b.length, 0) + 12;
  if (padTo > bare + 12) parts.push(chunk('tEXt', Buffer.alloc(padTo - bare - 12, 0x61)));
  parts.push(chunk('IEND', Buffer.alloc(0)));
  return Buffer.concat(parts);
}

const pdf = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n', 'latin1');
/** The first bytes of a Linux executable (ELF magic, 64-bit, little-endian), padded. */
const elf = Buffer.concat([Buffer.from([0x7f, 0x45, 0x4c, 0x46, 0x02, 0x01, 0x01, 0x00]), Buffer.alloc(120, 0)]);
const csv = Buffer.from('position_mi,o2_pct,lel_pct\n17.30,20.9,0\n17.31,20.9,0 — clear\n', 'utf8');

// ---- helpers ----------------------------------------------------------------------------------------

function upload(client: ApiClient, permitId: string, bytes: Buffer, filename: string, fields: Record<string, string> = {}, contentType = 'application/octet-stream') {
  let req = client.agent.post(`/api/permits/${permitId}/attachments`).set('x-csrf-token', client.csrf);
  for (const [k, v] of Object.entries(fields)) req = req.field(k, v);
  return req.attach('file', bytes, { filename, contentType });
}

function download(client: ApiClient, url: string) {
  return client.agent
    .get(url)
    .buffer(true)
    .parse((res, done) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => done(null, Buffer.concat(chunks)));
    });
}

/** Every file under a folder, as paths relative to it. */
function filesUnder(root: string): string[] {
  if (!existsSync(root)) return [];
  const out: string[] = [];
  const walk = (dir: string) => {
    for (const name of readdirSync(dir)) {
      const full = join(dir, name);
      if (statSync(full).isDirectory()) walk(full);
      else out.push(relative(root, full));
    }
  };
  walk(root);
  return out.sort();
}

async function attachmentRows(srv: TestServer) {
  const [{ n }] = await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM attachments`, { type: QueryTypes.SELECT });
  return n;
}

/** A refusal must leave nothing behind: no file in the data folder (uploads included), no row. */
async function expectNothingStored(srv: TestServer, act: () => Promise<{ status: number; body: unknown }>, status: number) {
  const filesBefore = filesUnder(srv.deps.config.DATA_DIR);
  const rowsBefore = await attachmentRows(srv);
  const res = await act();
  expect(res.status, JSON.stringify(res.body)).toBe(status);
  expect(filesUnder(srv.deps.config.DATA_DIR)).toEqual(filesBefore);
  expect(await attachmentRows(srv)).toBe(rowsBefore);
  return res as { status: number; body: { error: { code: string; message: string; details: { path: string; message: string }[] } } };
}

const uuidName = /^[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;
// Stored by tenant, permit and the attachment's own id (issue 20: the same keys in a bucket).
const storedKey = /^[0-9a-f-]{36}\/[0-9a-f-]{36}\/[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}$/;

describe('attachments on a permit', () => {
  let srv: TestServer;
  let lead: ApiClient, authoriser: ApiClient, control: ApiClient, auditor: ApiClient, otherTenant: ApiClient;
  let ids: Awaited<ReturnType<typeof demoIds>>;
  let permitId = '';
  let pngId = '';

  beforeAll(async () => {
    srv = await startTestServer();
    [lead, authoriser, control, auditor, otherTenant] = await Promise.all([users.lead, users.authoriser, users.control, users.auditor, users.otherTenant].map((u) => srv.signIn(u)));
    ids = await demoIds(srv);
    const res = await lead.post('/api/permits', permitBody(ids, srv.clock.now()));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    permitId = res.body.id;
  });
  afterAll(() => srv.close());

  it('when the lead uploads a PNG, then it is stored under tenant, permit and a random id in UPLOAD_DIR and downloads byte for byte, inline, with nosniff', async () => {
    const bytes = png();
    const before = filesUnder(srv.deps.config.UPLOAD_DIR);
    // The browser's declared type is ignored: the bytes say PNG.
    const res = await upload(lead, permitId, bytes, 'isolation CR-BV-149.png', {}, 'application/pdf');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body).toMatchObject({ permitId, entityType: 'permit', entityId: permitId, originalName: 'isolation CR-BV-149.png', contentType: 'image/png', sizeBytes: bytes.length, inline: true });
    pngId = res.body.id;

    const added = filesUnder(srv.deps.config.UPLOAD_DIR).filter((f) => !before.includes(f));
    expect(added).toHaveLength(1);
    expect(added[0]).toMatch(storedKey);
    expect(added[0]).toBe(`${ids.tenantId}/${permitId}/${res.body.id}`);

    const got = await download(authoriser, res.body.downloadUrl);
    expect(got.status).toBe(200);
    expect(Buffer.compare(got.body as Buffer, bytes)).toBe(0);
    expect(got.headers['content-type']).toBe('image/png');
    expect(got.headers['content-disposition']).toMatch(/^inline; filename="isolation CR-BV-149.png"/);
    expect(got.headers['x-content-type-options']).toBe('nosniff');
  });

  it('when a PDF is uploaded, then it downloads as an attachment, never inline', async () => {
    const res = await upload(authoriser, permitId, pdf, 'method statement.pdf');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.contentType).toBe('application/pdf');
    const got = await download(lead, res.body.downloadUrl);
    expect(got.status).toBe(200);
    expect(got.headers['content-disposition']).toMatch(/^attachment; filename="method statement.pdf"/);
    expect(Buffer.compare(got.body as Buffer, pdf)).toBe(0);
  });

  it('when a UTF-8 .csv of readings is uploaded, then it is kept as text/csv and downloads as an attachment', async () => {
    const res = await upload(lead, permitId, csv, 'readings.csv');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.contentType).toBe('text/csv');
    const got = await download(lead, res.body.downloadUrl);
    expect(got.headers['content-disposition']).toMatch(/^attachment;/);
    expect(Buffer.compare(got.body as Buffer, csv)).toBe(0);
  });

  it('when the permit’s files are listed, then the uploads come back paged with their uploader and download links', async () => {
    const res = await authoriser.get(`/api/permits/${permitId}/attachments?pageSize=2`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ total: 3, page: 1, pageSize: 2 });
    expect(res.body.items).toHaveLength(2);
    const all = (await authoriser.get(`/api/permits/${permitId}/attachments`)).body.items as { id: string; uploadedByName: string; downloadUrl: string }[];
    const png = all.find((a) => a.id === pngId)!;
    expect(png.uploadedByName).toBe('Rory Kilbride');
    expect(png.downloadUrl).toBe(`/api/attachments/${pngId}`);
  });

  it('when an upload is accepted, then an attachment_added audit event is on the permit and the chain still verifies', async () => {
    const events = await srv.deps.sequelize.query<{ action: string; entity_id: string; data: { sha256: string } }>(
      `SELECT action, entity_id, data FROM audit_events WHERE permit_id = :permitId AND action = 'attachment_added' ORDER BY seq`,
      { replacements: { permitId }, type: QueryTypes.SELECT },
    );
    expect(events).toHaveLength(3);
    expect(events[0].entity_id).toBe(pngId);
    expect(events[0].data.sha256).toMatch(/^[0-9a-f]{64}$/);
    const verify = await auditor.get('/api/audit/verify');
    expect(verify.body.ok).toBe(true);
  });

  it('when an executable is renamed photo.jpg, then it is refused with 415 and nothing is stored', async () => {
    const res = await expectNothingStored(srv, () => upload(lead, permitId, elf, 'photo.jpg', {}, 'image/jpeg'), 415);
    expect(res.body.error.code).toBe('unsupported_media_type');
    expect(res.body.error.message).toMatch(/not accepted/);
  });

  it('when a .csv holds binary bytes or is not UTF-8, or a text file is not .csv, then each is refused with 415 and nothing is stored', async () => {
    await expectNothingStored(srv, () => upload(lead, permitId, Buffer.from('a,b\n1,\u0000\n', 'latin1'), 'readings.csv'), 415);
    await expectNothingStored(srv, () => upload(lead, permitId, Buffer.from([0x61, 0x2c, 0x62, 0x0a, 0xff, 0xfe, 0x2c, 0x31, 0x0a]), 'readings.csv'), 415);
    await expectNothingStored(srv, () => upload(lead, permitId, Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>'), 'drawing.svg'), 415);
    await expectNothingStored(srv, () => upload(lead, permitId, csv, 'readings.txt'), 415);
  });

  it('when the file is empty, then it is refused with 400 and nothing is stored', async () => {
    const res = await expectNothingStored(srv, () => upload(lead, permitId, Buffer.alloc(0), 'empty.png'), 400);
    expect(res.body.error.message).toMatch(/empty/);
  });

  it('when no file is sent, or two are, or an unknown field, then 400 and nothing is stored', async () => {
    await expectNothingStored(srv, () => lead.post(`/api/permits/${permitId}/attachments`, { entityType: 'permit' }), 400);
    await expectNothingStored(
      srv,
      () => lead.agent.post(`/api/permits/${permitId}/attachments`).set('x-csrf-token', lead.csrf).attach('file', png(), 'a.png').attach('file', png(), 'b.png'),
      400,
    );
    await expectNothingStored(srv, () => upload(lead, permitId, png(), 'a.png', { entityType: 'crane' }), 400);
  });

  it('when the file names a path outside the upload folder, then the name is cut to its last part and the bytes stay in UPLOAD_DIR', async () => {
    const uploadDir = srv.deps.config.UPLOAD_DIR;
    const escapeTarget = resolve(uploadDir, '../../etc/passwd');
    const dataBefore = filesUnder(srv.deps.config.DATA_DIR);
    const parentBefore = readdirSync(dirname(srv.deps.config.DATA_DIR));
    const res = await upload(lead, permitId, png(), '../../etc/passwd');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.originalName).toBe('passwd');
    expect(existsSync(escapeTarget)).toBe(false);
    const added = filesUnder(srv.deps.config.DATA_DIR).filter((f) => !dataBefore.includes(f));
    expect(added).toHaveLength(1);
    // Inside the upload folder, at the stored key.
    expect(relative(uploadDir, join(srv.deps.config.DATA_DIR, added[0]))).toMatch(storedKey);
    expect(added[0].split('/').pop()).toMatch(uuidName);
    expect(readdirSync(dirname(srv.deps.config.DATA_DIR))).toEqual(expect.arrayContaining(parentBefore));
    const [row] = await srv.deps.sequelize.query<{ stored_name: string; original_name: string }>(`SELECT stored_name, original_name FROM attachments WHERE id = :id`, {
      replacements: { id: res.body.id },
      type: QueryTypes.SELECT,
    });
    expect(row.stored_name).toMatch(storedKey);
    expect(row.original_name).toBe('passwd');
  });

  it('when the name is very long or carries control characters, then a clean name of at most 120 characters is kept', async () => {
    const long = `${'dented-section-photo-'.repeat(15)}.png`;
    const res = await upload(lead, permitId, png(), long);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect([...res.body.originalName].length).toBeLessThanOrEqual(120);
    expect(res.body.originalName).toMatch(/\.png$/);
    const tricky = await upload(lead, permitId, png(), 'valve\u202Egnp.exe');
    expect(tricky.status, JSON.stringify(tricky.body)).toBe(201);
    expect(tricky.body.originalName).toBe('valvegnp.exe');
  });

  it('when the file is for an isolation step of another permit, then 400 names entityId and nothing is stored', async () => {
    const res = await expectNothingStored(srv, () => upload(lead, permitId, png(), 'a.png', { entityType: 'isolation_step', entityId: '6f1d1b34-5a49-4f4e-9c1e-1d2b3c4d5e6f' }), 400);
    expect(res.body.error.details.map((d) => d.path)).toContain('entityId');
    await expectNothingStored(srv, () => upload(lead, permitId, png(), 'a.png', { entityType: 'gas_test' }), 400);
  });

  it('when the control room or the auditor uploads, then 403 (they may read files, not add them) and nothing is stored', async () => {
    await expectNothingStored(srv, () => upload(control, permitId, png(), 'a.png'), 403);
    await expectNothingStored(srv, () => upload(auditor, permitId, png(), 'a.png'), 403);
    expect((await download(control, `/api/attachments/${pngId}`)).status).toBe(200);
  });

  it('when a user of another tenant asks for the file, the list or to upload, then each answer is 404', async () => {
    const got = await download(otherTenant, `/api/attachments/${pngId}`);
    expect(got.status).toBe(404);
    expect(JSON.parse((got.body as Buffer).toString('utf8')).error.code).toBe('not_found');
    expect((await otherTenant.get(`/api/permits/${permitId}/attachments`)).status).toBe(404);
    await expectNothingStored(srv, () => upload(otherTenant, permitId, png(), 'a.png'), 404);
  });

  it('when the attachment id is not a uuid or does not exist, then 400 and 404', async () => {
    expect((await lead.get('/api/attachments/not-a-uuid')).status).toBe(400);
    expect((await lead.get('/api/attachments/6f1d1b34-5a49-4f4e-9c1e-1d2b3c4d5e6f')).status).toBe(404);
  });

  it('when the database refuses the row at commit, after the bytes were written, then the file is removed again', async () => {
    // A deferred constraint trigger fails the transaction at COMMIT, the last moment, after the write.
    await srv.deps.sequelize.query(`
      CREATE FUNCTION test_refuse_attachment() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'refused for the test'; END $$;
      CREATE CONSTRAINT TRIGGER test_refuse_attachment AFTER INSERT ON attachments DEFERRABLE INITIALLY DEFERRED FOR EACH ROW EXECUTE FUNCTION test_refuse_attachment();`);
    try {
      const res = await expectNothingStored(srv, () => upload(lead, permitId, png(), 'late-failure.png'), 500);
      expect(res.body.error.code).toBe('internal');
    } finally {
      await srv.deps.sequelize.query(`DROP TRIGGER test_refuse_attachment ON attachments; DROP FUNCTION test_refuse_attachment();`);
    }
  });

  it('when the permit is cancelled, then its record takes no new files (422)', async () => {
    const other = await lead.post('/api/permits', permitBody(ids, srv.clock.now(), { title: 'Permit to cancel' }));
    expect((await transition(lead, other.body.id, 'cancel', { reason: 'Job moved to next month' })).status).toBe(200);
    await expectNothingStored(srv, () => upload(lead, other.body.id, png(), 'a.png'), 422);
  });
});

describe('attachments with a small upload limit', () => {
  let srv: TestServer;
  let lead: ApiClient;
  let permitId = '';

  beforeAll(async () => {
    srv = await startTestServer({ env: { UPLOAD_MAX_BYTES: '1024' } });
    lead = await srv.signIn(users.lead);
    const ids = await demoIds(srv);
    permitId = (await lead.post('/api/permits', permitBody(ids, srv.clock.now()))).body.id;
  });
  afterAll(() => srv.close());

  it('when the file is larger than UPLOAD_MAX_BYTES, then 413 says the limit and nothing is stored', async () => {
    const big = png(4096);
    expect(big.length).toBeGreaterThan(1024);
    const res = await expectNothingStored(srv, () => upload(lead, permitId, big, 'big.png'), 413);
    expect(res.body.error.code).toBe('payload_too_large');
    expect(res.body.error.message).toMatch(/1 KB/);
  });

  it('when the file is exactly at the limit, then it is accepted', async () => {
    const exact = png(1024);
    expect(exact.length).toBe(1024);
    const res = await upload(lead, permitId, exact, 'exact.png');
    expect(res.status, JSON.stringify(res.body)).toBe(201);
  });
});
