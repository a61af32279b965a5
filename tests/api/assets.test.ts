import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes } from 'sequelize';
import type { IsolationPoint, PipelineDetail, PipelineSummary } from '@shared/assets/types';
import { startTestServer, type ApiClient, type TestServer } from '../fixtures/test-server';
import { seedPeople } from '../../server/src/demo/demo-people';
import { seedAssets } from '../../server/src/demo/demo-assets';

let srv: TestServer;
const as: Record<string, ApiClient> = {};
const people = {
  admin: 'admin@bramblecote.example',
  authoriser: 'authoriser@bramblecote.example',
  lead: 'lead@oxbow-repair.example',
  tech: 'tech@oxbow-repair.example',
  control: 'control@bramblecote.example',
  auditor: 'auditor@bramblecote.example',
  harlow: 'authoriser@harlowridge.example',
};
let cedarRun: PipelineDetail;

const pipelineBody = (code: string, extra: Record<string, unknown> = {}) => ({
  code, name: `${code} Test Line`, product: 'natural_gas', nps: 12, schedule: 'STD', mopPsig: 900, startPosition: 0, endPosition: 12.5, ...extra,
});

async function count(table: string) {
  const [{ n }] = await srv.deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM ${table}`, { type: QueryTypes.SELECT });
  return n;
}

beforeAll(async () => {
  srv = await startTestServer();
  for (const [key, email] of Object.entries(people)) as[key] = await srv.signIn(email);
  const list = await as.admin.get('/api/pipelines?q=Cedar');
  cedarRun = (await as.admin.get(`/api/pipelines/${list.body.items[0].id}`)).body;
});
afterAll(async () => srv?.close());

describe('reading the register', () => {
  it.each(['admin', 'authoriser', 'lead', 'tech', 'control', 'auditor'])('when the %s lists pipelines, then both Bramblecote lines come back, paged', async (who) => {
    const res = await as[who].get('/api/pipelines?pageSize=1');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ total: 2, page: 1, pageSize: 1 });
    expect(res.body.items).toHaveLength(1);
  });

  it('when a contractor lead opens the Cedar Run lateral, then points come ordered by position with derived segments', async () => {
    const res = await as.lead.get(`/api/pipelines/${cedarRun.id}`);
    expect(res.status).toBe(200);
    const detail = res.body as PipelineDetail;
    expect(detail.unit).toBe('mi');
    // ASME B36.10M-2004: NPS 10 Sch 40 is OD 10.750 in, wall 0.365 in, so ID 10.020 in.
    expect(detail.insideDiameterIn).toBeCloseTo(10.02, 3);
    expect(detail.insideDiameterSource).toBe('schedule');
    const positions = detail.points.map((p) => p.position);
    expect(positions).toEqual([...positions].sort((a, b) => a - b));
    expect(detail.points.filter((p) => p.kind === 'block_valve').map((p) => p.position)).toEqual([0, 4.6, 9.8, 14.9, 19.7, 25.2, 30.4]);
    expect(detail.segments).toHaveLength(6);
    const around173 = detail.segments.find((s) => s.from.position <= 17.3 && s.to.position >= 17.3)!;
    expect([around173.from.tagCode, around173.to.tagCode]).toEqual(['CR-BV-149', 'CR-BV-197']);
    const tags = (ids: string[]) => ids.map((id) => detail.points.find((p) => p.id === id)!.tagCode);
    expect(tags(around173.ventIds)).toEqual(['CR-VT-150', 'CR-VT-196']);
    expect(tags(around173.drainIds)).toEqual(['CR-DR-151', 'CR-DR-195']);
    expect(detail.sites.map((s) => s.name)).toEqual(['Cedar Run Station', 'Tansy Hollow Station', 'Haddon Fork Terminal']);
  });

  it('when the points list is filtered by pipeline and kind, then only those come back, paged', async () => {
    const res = await as.tech.get(`/api/isolation-points?pipelineId=${cedarRun.id}&kind=block_valve&pageSize=5&page=2`);
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(7);
    expect(res.body.items.map((p: IsolationPoint) => p.tagCode)).toEqual(['CR-BV-252', 'CR-BV-304']);
  });

  it('when the Harlow Ridge authoriser asks for a Bramblecote pipeline, point, lock or tag, then each is not found', async () => {
    const point = cedarRun.points[0];
    const lock = (await as.admin.get('/api/locks?pageSize=1')).body.items[0];
    const tag = (await as.admin.get('/api/tags?pageSize=1')).body.items[0];
    for (const path of [`/api/pipelines/${cedarRun.id}`, `/api/isolation-points/${point.id}`, `/api/locks/${lock.id}`, `/api/tags/${tag.id}`]) {
      const res = await as.harlow.get(path);
      expect(res.status, path).toBe(404);
      expect(res.body.error.code).toBe('not_found');
    }
    const patched = await as.harlow.patch(`/api/pipelines/${cedarRun.id}`, { mopPsig: 1 });
    expect(patched.status).toBe(404);
    const own = await as.harlow.get('/api/pipelines');
    expect(own.body.items.map((p: PipelineSummary) => p.code)).toEqual(['HR-8']);
    expect(own.body.items[0].unit).toBe('km');
  });
});

describe('demo data', () => {
  it('when the asset seed runs a second time, then it finds every row and adds nothing', async () => {
    const tables = ['pipelines', 'pipeline_sites', 'isolation_points', 'locks', 'tags'];
    const before = await Promise.all(tables.map(count));
    const db = srv.deps.sequelize;
    await db.transaction(async (t) => seedAssets(db, await seedPeople(db, 'unused-hash', t), t));
    expect(await Promise.all(tables.map(count))).toEqual(before);
    expect(before.slice(3)).toEqual([50, 50]);
  });
});

describe('changing the register', () => {
  it.each(['admin', 'authoriser'])('when the %s adds a pipeline and a valve on it, then both are saved and audited', async (who) => {
    const code = `T-${who.toUpperCase()}`;
    const created = await as[who].post('/api/pipelines', pipelineBody(code, { sites: [{ name: 'North Yard', position: 0 }] }));
    expect(created.status).toBe(201);
    // ASME B36.10M-2004: NPS 12 STD is OD 12.750 in, wall 0.375 in, so ID 12.000 in.
    expect(created.body).toMatchObject({ code, insideDiameterIn: 12, sites: [{ name: 'North Yard', position: 0 }], segments: [] });
    const point = await as[who].post('/api/isolation-points', {
      pipelineId: created.body.id, tagCode: `${code}-bv-1`, kind: 'block_valve', position: 3.25, valveType: 'ball', normalPosition: 'open', remotelyOperable: false,
    });
    expect(point.status).toBe(201);
    expect(point.body.tagCode).toBe(`${code}-BV-1`);
    const events = await srv.deps.sequelize.query<{ action: string }>(`SELECT action FROM audit_events WHERE entity_id IN (:ids) ORDER BY seq`, {
      replacements: { ids: [created.body.id, point.body.id] },
      type: QueryTypes.SELECT,
    });
    expect(events.map((e) => e.action)).toEqual(['created', 'created']);
  });

  it.each(['lead', 'tech', 'control', 'auditor'])('when the %s tries to write to the register, then every write is refused with 403', async (who) => {
    const point = cedarRun.points[0];
    const lock = (await as.admin.get('/api/locks?pageSize=1')).body.items[0];
    const tag = (await as.admin.get('/api/tags?pageSize=1')).body.items[0];
    const attempts: [string, ReturnType<ApiClient['post']>][] = [
      ['POST pipeline', as[who].post('/api/pipelines', pipelineBody(`NO-${who}`))],
      ['PATCH pipeline', as[who].patch(`/api/pipelines/${cedarRun.id}`, { mopPsig: 10 })],
      ['POST point', as[who].post('/api/isolation-points', { pipelineId: cedarRun.id, tagCode: `NO-${who}`, kind: 'vent', position: 1 })],
      ['PATCH point', as[who].patch(`/api/isolation-points/${point.id}`, { description: 'changed' })],
      ['POST lock', as[who].post('/api/locks', { number: `L-NO-${who}` })],
      ['PATCH lock', as[who].patch(`/api/locks/${lock.id}`, { state: 'lost' })],
      ['POST tag', as[who].post('/api/tags', { number: `T-NO-${who}` })],
      ['PATCH tag', as[who].patch(`/api/tags/${tag.id}`, { state: 'lost' })],
      ['POST import', as[who].post('/api/imports/assets?dryRun=true', { csv: 'record_type,pipeline_code\n' })],
    ];
    for (const [label, call] of attempts) {
      const res = await call;
      expect(res.status, label).toBe(403);
      expect(res.body.error.code, label).toBe('forbidden');
    }
  });

  it('when a tag code already on the register is used again, then 409 names the point that has it', async () => {
    const res = await as.authoriser.post('/api/isolation-points', { pipelineId: cedarRun.id, tagCode: 'cr-bv-149', kind: 'vent', position: 2 });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('conflict');
    expect(res.body.error.message).toBe('Tag code CR-BV-149 is already used by the point at 14.9 on BM-10 Cedar Run Lateral. Tag codes are unique across the register.');
    const renamed = await as.authoriser.patch(`/api/isolation-points/${cedarRun.points.find((p) => p.tagCode === 'CR-VT-150')!.id}`, { tagCode: 'CR-BV-149' });
    expect(renamed.status).toBe(409);
  });

  it('when a pipeline code or lock number is used twice, then 409 with a clear message', async () => {
    const pipe = await as.admin.post('/api/pipelines', pipelineBody('BM-10'));
    expect(pipe.status).toBe(409);
    expect(pipe.body.error.message).toBe('Pipeline code BM-10 is already used by "BM-10 Cedar Run Lateral".');
    const lock = await as.admin.post('/api/locks', { number: 'l-001' });
    expect(lock.status).toBe(409);
    expect(lock.body.error.message).toBe('Lock L-001 is already in the register; each lock number is used once.');
  });

  it('when the input is bad, then 400 names every field at fault', async () => {
    const pipe = await as.admin.post('/api/pipelines', { code: 'BAD CODE', product: 'jet', nps: 22, schedule: '40', mopPsig: -1, startPosition: 5, endPosition: 'x' });
    expect(pipe.status).toBe(400);
    expect(pipe.body.error.code).toBe('validation_failed');
    expect(pipe.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['code', 'endPosition', 'mopPsig', 'name', 'product']);

    // ASME B36.10M lists no Sch 40 wall for NPS 22: the bore cannot come from the table.
    const noWall = await as.admin.post('/api/pipelines', pipelineBody('T-22', { nps: 22, schedule: '40' }));
    expect(noWall.status).toBe(400);
    expect(noWall.body.error.details).toEqual([{ path: 'schedule', message: expect.stringContaining('not listed for NPS 22') }]);

    const valve = await as.admin.post('/api/isolation-points', { pipelineId: cedarRun.id, tagCode: 'CR-BV-999', kind: 'block_valve', position: 40 });
    expect(valve.status).toBe(400);
    expect(valve.body.error.details.map((d: { path: string }) => d.path)).toEqual(['valveType', 'normalPosition', 'remotelyOperable']);

    const offLine = await as.admin.post('/api/isolation-points', { pipelineId: cedarRun.id, tagCode: 'CR-VT-999', kind: 'vent', position: 31 });
    expect(offLine.status).toBe(400);
    expect(offLine.body.error.details).toEqual([{ path: 'position', message: 'Position 31 is off BM-10, which runs from 0 to 30.4.' }]);

    const query = await as.admin.get('/api/pipelines?product=jet&page=0');
    expect(query.status).toBe(400);
    expect(query.body.error.details.map((d: { path: string }) => d.path).sort()).toEqual(['page', 'product']);
  });

  it('when a pipeline is shortened past its own points, then 400 lists them and nothing changes; a plain edit goes through', async () => {
    const res = await as.admin.patch(`/api/pipelines/${cedarRun.id}`, { endPosition: 28 });
    expect(res.status).toBe(400);
    expect(res.body.error.details).toEqual([
      { path: 'sites.2.position', message: 'The site must lie on the line, between 0 and 28.' },
      { path: 'endPosition', message: 'Move or change these points first: CR-MP-302 at 30.2, CR-BV-304 at 30.4.' },
    ]);
    expect((await as.admin.get(`/api/pipelines/${cedarRun.id}`)).body.endPosition).toBe(30.4);
    const ok = await as.admin.patch(`/api/pipelines/${cedarRun.id}`, { mopPsig: 1080 });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ mopPsig: 1080, endPosition: 30.4, insideDiameterIn: 10.02 });
    const measured = await as.admin.patch(`/api/pipelines/${cedarRun.id}`, { insideDiameterIn: 10.01 });
    expect(measured.body).toMatchObject({ insideDiameterIn: 10.01, insideDiameterSource: 'explicit' });
    const back = await as.admin.patch(`/api/pipelines/${cedarRun.id}`, { insideDiameterIn: null, mopPsig: 1100 });
    expect(back.body).toMatchObject({ insideDiameterIn: 10.02, insideDiameterSource: 'schedule' });
  });

  it('when a valve is turned into a vent, then its valve details go with it', async () => {
    const created = await as.admin.post('/api/isolation-points', { pipelineId: cedarRun.id, tagCode: 'CR-BV-X1', kind: 'block_valve', position: 2, valveType: 'plug', normalPosition: 'closed', remotelyOperable: true });
    const res = await as.admin.patch(`/api/isolation-points/${created.body.id}`, { kind: 'vent' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ kind: 'vent', valveType: null, normalPosition: null, remotelyOperable: null });
  });
});

describe('locks and tags', () => {
  it('when locks are listed by state, then the count and pages follow the filter', async () => {
    const all = await as.control.get('/api/locks?state=in_store&pageSize=15&page=3');
    expect(all.status).toBe(200);
    expect(all.body).toMatchObject({ total: 40, page: 3, pageSize: 15 });
    expect(all.body.items.map((l: { number: string }) => l.number)).toEqual(['L-031', 'L-032', 'L-033', 'L-034', 'L-035', 'L-036', 'L-037', 'L-038', 'L-039', 'L-040']);
    const harlow = await as.harlow.get('/api/tags');
    expect(harlow.body.total).toBe(10);
  });

  it('when a lock is issued, lost and retired, then its state and holder follow; it can never be set on an isolation by hand', async () => {
    const lock = (await as.admin.get('/api/locks?q=L-012')).body.items[0];
    const techId = (await as.tech.get('/api/auth/me')).body.user.id;
    const issued = await as.authoriser.patch(`/api/locks/${lock.id}`, { holderUserId: techId });
    expect(issued.body).toMatchObject({ state: 'in_store', holderName: 'Sam Ferrand' });
    const applied = await as.authoriser.patch(`/api/locks/${lock.id}`, { state: 'applied' });
    expect(applied.status).toBe(400);
    const lost = await as.authoriser.patch(`/api/locks/${lock.id}`, { state: 'lost', notes: 'Dropped in the Oriel Creek ditch' });
    expect(lost.body).toMatchObject({ state: 'lost', notes: 'Dropped in the Oriel Creek ditch' });
    expect((await as.auditor.get('/api/locks?state=lost')).body.items.map((l: { number: string }) => l.number)).toEqual(['L-012']);
    const retired = await as.authoriser.patch(`/api/locks/${lock.id}`, { state: 'retired' });
    expect(retired.body).toMatchObject({ state: 'retired', holderUserId: null });
    const revived = await as.authoriser.patch(`/api/locks/${lock.id}`, { state: 'in_store' });
    expect(revived.status).toBe(422);
    const outsider = (await as.harlow.get('/api/auth/me')).body.user.id;
    const foreignHolder = await as.admin.post('/api/tags', { number: 'T-900', holderUserId: outsider });
    expect(foreignHolder.status).toBe(400);
    expect(foreignHolder.body.error.details[0].path).toBe('holderUserId');
  });

  it('when a lock is on an isolation, then the register will not change its state or holder', async () => {
    const lock = (await as.admin.get('/api/locks?q=L-020')).body.items[0];
    await srv.deps.sequelize.query(`UPDATE locks SET state = 'applied' WHERE id = :id`, { replacements: { id: lock.id } });
    const res = await as.admin.patch(`/api/locks/${lock.id}`, { state: 'in_store' });
    expect(res.status).toBe(422);
    expect(res.body.error.message).toContain('on an isolation');
    const notes = await as.admin.patch(`/api/locks/${lock.id}`, { notes: 'Paint flaking' });
    expect(notes.status).toBe(200);
  });
});

const header = 'record_type,pipeline_code,name,product,nps,schedule,wall_thickness_in,inside_diameter_in,mop_psig,start_position,end_position,notes,tag_code,kind,position,valve_type,normal_position,remotely_operable,description';

describe('CSV import and export', () => {
  it('when the file has errors, then every one is listed by row and column and nothing is written, dry run or not', async () => {
    const csv = [
      header,
      'pipeline,IM-1,Import Line One,crude_oil,8,40,,,900,0,10,,,,,,,,',
      'pipeline,IM-2,Import Line Two,jet fuel,8,,,,900,0,10,,,,,,,,',
      'point,IM-1,,,,,,,,,,,IM-BV-1,block_valve,2,gate,open,,',
      'point,IM-1,,,,,,,,,,,IM-VT-1,vent,12,,,,',
      'point,IM-9,,,,,,,,,,,IM-VT-2,vent,1,,,,',
      'point,IM-1,,,,,,,,,,,CR-BV-149,vent,1,,,,',
      'site,IM-1,North,,,,,,,,,,,,abc,,,,',
      'valve,IM-1,,,,,,,,,,,,,,,,,',
    ].join('\r\n');
    const before = await Promise.all(['pipelines', 'pipeline_sites', 'isolation_points'].map(count));
    const preview = await as.admin.agent.post('/api/imports/assets?dryRun=true').set('x-csrf-token', as.admin.csrf).set('content-type', 'text/csv').send(csv);
    expect(preview.status).toBe(200);
    expect(preview.body.valid).toBe(false);
    expect(preview.body.applied).toBe(false);
    const found = preview.body.errors.map((e: { row: number; column: string | null }) => `${e.row}:${e.column}`);
    expect(found).toEqual(['3:product', '3:schedule', '4:remotely_operable', '5:position', '6:pipeline_code', '7:tag_code', '8:position', '9:record_type']);

    const real = await as.admin.agent.post('/api/imports/assets').set('x-csrf-token', as.admin.csrf).set('content-type', 'text/csv').send(csv);
    expect(real.status).toBe(400);
    expect(real.body.error.code).toBe('validation_failed');
    expect(real.body.error.details).toHaveLength(8);
    expect(real.body.error.details[0]).toEqual({ path: 'row 3.product', message: 'Choose the product carried.' });
    expect(real.body.error.report.errors).toHaveLength(8);
    expect(await Promise.all(['pipelines', 'pipeline_sites', 'isolation_points'].map(count))).toEqual(before);
  });

  it('when a valid file is imported, then every row is written; the preview before it writes nothing', async () => {
    const csv =
      '\uFEFF' +
      [
        header,
        'pipeline,IM-3,"Import Line Three, north",ngl,6,STD,,,1440,0,22.5,"Says ""hello"", then\ngoes on",,,,,,,',
        'site,IM-3,Rook Hill Station,,,,,,,,,,,,0,,,,',
        'point,IM-3,,,,,,,,,,,IM3-BV-1,block valve,0,Ball,Closed,yes,Station valve',
        'point,IM-3,,,,,,,,,,,IM3-VT-1,vent,0.1,,,,',
        'point,IM-3,,,,,,,,,,,IM3-EI-1,isolator,0,,,,"Motor starter M-3, MCC-2"',
        'point,IM-3,,,,,,,,,,,IM3-BV-2,block_valve,22.5,gate,open,no,',
        '',
      ].join('\r\n');
    const post = (dry: boolean) => as.authoriser.agent.post(`/api/imports/assets${dry ? '?dryRun=true' : ''}`).set('x-csrf-token', as.authoriser.csrf).set('content-type', 'text/csv').send(csv);
    const preview = await post(true);
    expect(preview.body).toMatchObject({ valid: true, applied: false, rows: 6, pipelines: { create: 1, update: 0 }, sites: { create: 1, update: 0 }, points: { create: 4, update: 0 }, errors: [] });
    expect((await as.admin.get('/api/pipelines?q=IM-3')).body.total).toBe(0);

    const done = await post(false);
    expect(done.status).toBe(200);
    expect(done.body).toMatchObject({ valid: true, applied: true, points: { create: 4 } });
    const id = (await as.admin.get('/api/pipelines?q=IM-3')).body.items[0].id;
    const detail = (await as.admin.get(`/api/pipelines/${id}`)).body as PipelineDetail;
    expect(detail.name).toBe('Import Line Three, north');
    expect(detail.notes).toBe('Says "hello", then\ngoes on');
    // ASME B36.10M-2004: NPS 6 STD is OD 6.625 in, wall 0.280 in, so ID 6.065 in.
    expect(detail.insideDiameterIn).toBeCloseTo(6.065, 3);
    expect(detail.points.map((p) => p.tagCode)).toEqual(['IM3-BV-1', 'IM3-EI-1', 'IM3-VT-1', 'IM3-BV-2']);
    expect(detail.points[0]).toMatchObject({ valveType: 'ball', normalPosition: 'closed', remotelyOperable: true });
    expect(detail.segments).toHaveLength(1);
  });

  it('when the register is exported and the file imported back, then nothing changes and a second export is identical', async () => {
    const first = await as.auditor.get('/api/exports/assets.csv');
    expect(first.status).toBe(200);
    expect(first.headers['content-type']).toMatch(/^text\/csv/);
    expect(first.headers['content-disposition']).toMatch(/^attachment; filename="?holdpoint-assets-\d{4}-\d{2}-\d{2}\.csv"?$/);
    expect(first.text.split('\r\n')[0]).toBe(header);
    expect(first.text).toContain('point,BM-10,,,,,,,,,,,CR-BV-149,block_valve,14.9,ball,open,no,Mainline valve at Gorse Lane');

    const back = await as.admin.post('/api/imports/assets', { csv: first.text });
    expect(back.status).toBe(200);
    expect(back.body.valid).toBe(true);
    expect(back.body.pipelines.create + back.body.sites.create + back.body.points.create).toBe(0);
    expect(back.body.points.update).toBe(await count(`isolation_points WHERE tenant_id = (SELECT id FROM tenants WHERE slug = 'bramblecote')`));
    const second = await as.auditor.get('/api/exports/assets.csv');
    expect(second.text).toBe(first.text);
  });

  it('when the file comes as a browser upload, then it is read the same way', async () => {
    const csv = `${header}\npoint,BM-16,,,,,,,,,,,HC-VT-300,vent,30,,,,Vent above the river crossing\n`;
    const res = await as.admin.agent.post('/api/imports/assets?dryRun=true').set('x-csrf-token', as.admin.csrf).attach('file', Buffer.from(csv), { filename: 'assets.csv', contentType: 'text/csv' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ valid: true, points: { create: 1 } });
  });

  it('when the body is neither CSV, a file nor JSON, then 415; an upload without a file or with the wrong field is 400', async () => {
    const res = await as.admin.agent.post('/api/imports/assets').set('x-csrf-token', as.admin.csrf).set('content-type', 'application/xml').send('<x/>');
    expect(res.status).toBe(415);
    const noFile = await as.admin.agent.post('/api/imports/assets').set('x-csrf-token', as.admin.csrf).field('note', 'no file here');
    expect(noFile.status).toBe(400);
    expect(noFile.body.error.details).toEqual([{ path: 'file', message: 'Choose a CSV file.' }]);
    const wrongField = await as.admin.agent.post('/api/imports/assets').set('x-csrf-token', as.admin.csrf).attach('upload', Buffer.from('x'), 'x.csv');
    expect(wrongField.status).toBe(400);
  });

  it('when the text/csv body is larger than 2 MB, then 413 and nothing is read', async () => {
    const big = `${header}\n${'x'.repeat(2 * 1024 * 1024)}`;
    const res = await as.admin.agent.post('/api/imports/assets?dryRun=true').set('x-csrf-token', as.admin.csrf).set('content-type', 'text/csv').send(big);
    expect(res.status).toBe(413);
    expect(res.body.error.code).toBe('payload_too_large');
  });
});
