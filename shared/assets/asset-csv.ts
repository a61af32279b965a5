/**
 * The asset register's CSV layout: one file, one record per row, the kind of record in
 * `record_type` (pipeline, site or point). Columns belong to record types; a row leaves the other
 * types' columns empty. docs/assets.md describes each column.
 */
import { guardFormula, isPlainNumber, unguardFormula, type CsvValue } from '../csv/csv';
import type { IsolationPoint, PipelineDetail, PipelineSite } from './types';

export const assetCsvColumns = [
  'record_type', 'pipeline_code', 'name', 'product', 'nps', 'schedule', 'wall_thickness_in', 'inside_diameter_in', 'mop_psig',
  'start_position', 'end_position', 'notes', 'tag_code', 'kind', 'position', 'valve_type', 'normal_position', 'remotely_operable', 'description',
] as const;
export type AssetCsvColumn = (typeof assetCsvColumns)[number];

export const assetRecordTypes = ['pipeline', 'site', 'point'] as const;
export type AssetRecordType = (typeof assetRecordTypes)[number];

type Conversion = 'text' | 'code' | 'number' | 'boolean' | 'enum' | 'schedule';

/** Input field → [column, how the cell becomes a value], per record type. */
export const fieldColumns: Record<AssetRecordType, Record<string, readonly [AssetCsvColumn, Conversion]>> = {
  pipeline: {
    code: ['pipeline_code', 'code'],
    name: ['name', 'text'],
    product: ['product', 'enum'],
    nps: ['nps', 'number'],
    schedule: ['schedule', 'schedule'],
    wallThicknessIn: ['wall_thickness_in', 'number'],
    insideDiameterIn: ['inside_diameter_in', 'number'],
    mopPsig: ['mop_psig', 'number'],
    startPosition: ['start_position', 'number'],
    endPosition: ['end_position', 'number'],
    notes: ['notes', 'text'],
  },
  site: {
    name: ['name', 'text'],
    position: ['position', 'number'],
  },
  point: {
    tagCode: ['tag_code', 'code'],
    kind: ['kind', 'enum'],
    position: ['position', 'number'],
    description: ['description', 'text'],
    valveType: ['valve_type', 'enum'],
    normalPosition: ['normal_position', 'enum'],
    remotelyOperable: ['remotely_operable', 'boolean'],
  },
};

/** Columns a row of each type may fill (besides record_type and pipeline_code). */
export const columnsOf = (type: AssetRecordType): Set<AssetCsvColumn> => new Set(['record_type', 'pipeline_code', ...Object.values(fieldColumns[type]).map(([c]) => c)]);

const YES = new Set(['yes', 'y', 'true', '1']);
const NO = new Set(['no', 'n', 'false', '0']);

/**
 * Turns one cell into the value the shared schema checks. An empty cell is "not given". A cell that
 * cannot be converted is passed on as text, so the schema's own message reports it.
 */
export function cellValue(raw: string, how: Conversion): unknown {
  const text = unguardFormula(raw.trim());
  if (text === '') return undefined;
  switch (how) {
    case 'number':
      return isPlainNumber(text) ? Number(text) : text;
    case 'boolean': {
      const low = text.toLowerCase();
      return YES.has(low) ? true : NO.has(low) ? false : text;
    }
    case 'enum':
      return text.toLowerCase().replace(/[\s-]+/g, '_');
    case 'schedule':
      return text.toUpperCase().replace(/^SCH(EDULE)?\.?\s*/, '');
    default:
      return text;
  }
}

/** Reads the fields of one record type out of a row (keyed by column). */
export function rowToFields(type: AssetRecordType, row: Partial<Record<AssetCsvColumn, string>>): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const [field, [column, how]] of Object.entries(fieldColumns[type])) {
    const v = cellValue(row[column] ?? '', how);
    if (v !== undefined) out[field] = v;
  }
  return out;
}

const text = (v: string | null | undefined) => (v ? guardFormula(v) : '');
const yesNo = (v: boolean | null) => (v === null ? '' : v ? 'yes' : 'no');

function line(values: Partial<Record<AssetCsvColumn, CsvValue>>): CsvValue[] {
  return assetCsvColumns.map((c) => values[c] ?? '');
}

export type PipelineCsvFields = Pick<
  PipelineDetail,
  'code' | 'name' | 'product' | 'nps' | 'schedule' | 'wallThicknessIn' | 'insideDiameterIn' | 'insideDiameterSource' | 'mopPsig' | 'startPosition' | 'endPosition' | 'notes'
>;

export function pipelineRow(p: PipelineCsvFields): CsvValue[] {
  return line({
    record_type: 'pipeline',
    pipeline_code: p.code,
    name: text(p.name),
    product: p.product,
    nps: p.nps,
    schedule: p.schedule ?? '',
    wall_thickness_in: p.wallThicknessIn ?? '',
    // A bore worked out from the table is worked out again on import; only a measured one is carried.
    inside_diameter_in: p.insideDiameterSource === 'explicit' ? p.insideDiameterIn : '',
    mop_psig: p.mopPsig,
    start_position: p.startPosition,
    end_position: p.endPosition,
    notes: text(p.notes),
  });
}

export function siteRow(pipelineCode: string, s: PipelineSite): CsvValue[] {
  return line({ record_type: 'site', pipeline_code: pipelineCode, name: text(s.name), position: s.position });
}

export function pointRow(p: IsolationPoint): CsvValue[] {
  return line({
    record_type: 'point',
    pipeline_code: p.pipelineCode,
    tag_code: p.tagCode,
    kind: p.kind,
    position: p.position,
    valve_type: p.valveType ?? '',
    normal_position: p.normalPosition ?? '',
    remotely_operable: yesNo(p.remotelyOperable),
    description: text(p.description),
  });
}
