import { describe, expect, it } from 'vitest';
import { parseCsv } from '@shared/csv/read-csv';
import { assetCsvColumns } from '@shared/assets/asset-csv';
import { planAssetImport, type ImportSnapshot } from '@shared/assets/import-plan';

const header = assetCsvColumns.join(',');
type Cells = Partial<Record<(typeof assetCsvColumns)[number], string | number>>;
const row = (cells: Cells) => assetCsvColumns.map((c) => cells[c] ?? '').join(',');
const pipeline = (code: string, extra: Cells = {}) => row({ record_type: 'pipeline', pipeline_code: code, name: `${code} line`, product: 'crude_oil', nps: 8, schedule: 'STD', mop_psig: 900, start_position: 0, end_position: 10, ...extra });
const point = (code: string, tag: string, extra: Cells = {}) => row({ record_type: 'point', pipeline_code: code, tag_code: tag, kind: 'vent', position: 1, ...extra });
const site = (code: string, name: string, position: number) => row({ record_type: 'site', pipeline_code: code, name, position });

const empty: ImportSnapshot = { pipelines: [], sites: [], points: [] };
const plan = (lines: string[], snapshot = empty) => planAssetImport(parseCsv([header, ...lines].join('\r\n')), snapshot);
const where = (issues: { row: number; column: string | null }[]) => issues.map((i) => `${i.row}:${i.column}`);

describe('planAssetImport', () => {
  it('when every row is right, then the plan creates each pipeline, site and point with typed values', () => {
    const { issues, plan: p } = plan([
      pipeline('AB-1'),
      site('AB-1', 'Start Yard', 0),
      point('ab-1', 'ab-bv-1', { kind: 'Block Valve', position: 0.5, valve_type: 'GATE', normal_position: 'open', remotely_operable: 'Yes' }),
    ]);
    expect(issues).toEqual([]);
    expect(p.pipelines[0]).toMatchObject({ row: 2, action: 'create', input: { code: 'AB-1', nps: 8, schedule: 'STD', endPosition: 10 } });
    expect(p.sites[0]).toMatchObject({ row: 3, pipelineCode: 'AB-1', input: { name: 'Start Yard', position: 0 } });
    expect(p.points[0]).toMatchObject({ row: 4, action: 'create', pipelineCode: 'AB-1', input: { tagCode: 'AB-BV-1', kind: 'block_valve', valveType: 'gate', remotelyOperable: true } });
  });

  it('when rows name records the register has, then they become updates by code, tag code and site name', () => {
    const snapshot: ImportSnapshot = {
      pipelines: [{ id: 'p1', code: 'AB-1', startPosition: 0, endPosition: 10 }],
      sites: [{ pipelineCode: 'AB-1', name: 'Start Yard', position: 0 }],
      points: [{ id: 'x1', tagCode: 'AB-VT-1', pipelineCode: 'AB-1', position: 2 }],
    };
    const { issues, plan: p } = plan([site('AB-1', 'start yard', 0.1), point('AB-1', 'AB-VT-1', { position: 3 })], snapshot);
    expect(issues).toEqual([]);
    expect(p.sites[0].action).toBe('update');
    expect(p.points[0]).toMatchObject({ action: 'update', id: 'x1' });
  });

  it('when a row has several problems, then each is named with its row and column', () => {
    const { issues } = plan([pipeline('AB-1', { product: 'jet', nps: 'ten', schedule: '', end_position: '"1,000"' })]);
    expect(where(issues)).toEqual(['2:product', '2:nps', '2:end_position']);
  });

  it('when a column is filled that belongs to another kind of row, then that cell is named', () => {
    const { issues } = plan([pipeline('AB-1', { tag_code: 'X-1' }), point('AB-1', 'V-1', { valve_type: 'gate' })]);
    expect(where(issues)).toEqual(['2:tag_code', '3:valve_type']);
  });

  it('when points reach past their line, repeat a tag, name an unknown line or take another line\'s tag, then each row is refused', () => {
    const snapshot: ImportSnapshot = { pipelines: [{ id: 'p2', code: 'CD-2', startPosition: 0, endPosition: 5 }], sites: [], points: [{ id: 'y', tagCode: 'CD-VT-1', pipelineCode: 'CD-2', position: 1 }] };
    const { issues } = plan([pipeline('AB-1'), point('AB-1', 'V-1', { position: 10.5 }), point('AB-1', 'V-2'), point('AB-1', 'V-2'), point('ZZ-9', 'V-3'), point('AB-1', 'CD-VT-1'), site('CD-2', 'Far', 6)], snapshot);
    expect(where(issues)).toEqual(['3:position', '5:tag_code', '6:pipeline_code', '7:tag_code', '8:position']);
  });

  it('when a pipeline row itself is invalid, then its points are not also blamed for a missing pipeline', () => {
    const { issues } = plan([pipeline('AB-1', { product: '' }), point('AB-1', 'V-1')]);
    expect(where(issues)).toEqual(['2:product']);
  });

  it('when an update shortens a line past points the file does not move, then the pipeline row says which', () => {
    const snapshot: ImportSnapshot = { pipelines: [{ id: 'p1', code: 'AB-1', startPosition: 0, endPosition: 10 }], sites: [], points: [{ id: 'x', tagCode: 'AB-BV-9', pipelineCode: 'AB-1', position: 9 }] };
    const { issues } = plan([pipeline('AB-1', { end_position: 8 })], snapshot);
    expect(issues).toEqual([{ row: 2, column: 'start_position', message: expect.stringContaining('point AB-BV-9 at 9') }]);
    expect(plan([pipeline('AB-1', { end_position: 8 }), point('AB-1', 'AB-BV-9', { position: 7.5 })], snapshot).issues).toEqual([]);
  });

  it('when the header is wrong, then the unknown and missing columns are named on row 1 and no row is read', () => {
    const { issues } = planAssetImport(parseCsv('record_type,tagcode\npoint,X'), empty);
    expect(issues).toEqual([
      { row: 1, column: 'tagcode', message: expect.stringContaining('Unknown column') },
      { row: 1, column: 'pipeline_code', message: expect.stringContaining('no "pipeline_code"') },
    ]);
  });

  it('when the file is empty or its CSV is broken, then that is reported instead of a plan', () => {
    expect(planAssetImport(parseCsv(''), empty).issues).toEqual([{ row: 0, column: null, message: expect.stringContaining('empty') }]);
    expect(where(plan(['pipeline,"AB-1']).issues)).toContain('2:null');
    expect(where(plan(['valve,AB-1']).issues)).toEqual(['2:record_type']);
  });
});

describe('docs/sample-assets.csv', () => {
  it('when the sample file is checked against an empty register, then every row is valid', async () => {
    const { readFileSync } = await import('node:fs');
    const text = readFileSync(new URL('../../../docs/sample-assets.csv', import.meta.url), 'utf8');
    const { issues, plan: p } = planAssetImport(parseCsv(text), empty);
    expect(issues).toEqual([]);
    expect([p.pipelines.length, p.sites.length, p.points.length]).toEqual([1, 2, 8]);
  });
});
