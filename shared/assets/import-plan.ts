/**
 * Checks an asset CSV against the shared schemas and against what the register already holds, and
 * says what importing it would do. Pure: the server passes a snapshot of the register in and writes
 * the plan only when there is not a single issue, so a file is taken whole or not at all.
 * Pipelines match by code, points by tag code, sites by pipeline and name: a row that matches
 * updates, any other row creates, so an exported file imports back as a no-op.
 */
import type { z } from 'zod';
import type { CsvParseResult } from '../csv/csv';
import { pipelineInputSchema, pointRecordSchema, siteInputSchema, type PipelineInput, type SiteInput } from '../schemas/assets.schema';
import { assetCsvColumns, assetRecordTypes, columnsOf, fieldColumns, rowToFields, type AssetCsvColumn, type AssetRecordType } from './asset-csv';
import type { ImportIssue, ImportReport } from './types';

export interface ImportSnapshot {
  pipelines: { id: string; code: string; startPosition: number; endPosition: number }[];
  sites: { pipelineCode: string; name: string; position: number }[];
  points: { id: string; tagCode: string; pipelineCode: string; position: number }[];
}

type Action = 'create' | 'update';
export type PointRecord = z.infer<typeof pointRecordSchema>;
export interface AssetImportPlan {
  pipelines: { row: number; action: Action; id: string | null; input: PipelineInput }[];
  sites: { row: number; action: Action; pipelineCode: string; input: SiteInput }[];
  points: { row: number; action: Action; id: string | null; pipelineCode: string; input: PointRecord }[];
}

export const MAX_IMPORT_ROWS = 10_000;
const REQUIRED: AssetCsvColumn[] = ['record_type', 'pipeline_code'];
const schemas = { pipeline: pipelineInputSchema, site: siteInputSchema, point: pointRecordSchema } as const;

interface Row {
  row: number;
  type: AssetRecordType;
  cells: Partial<Record<AssetCsvColumn, string>>;
}

function readHeader(cells: string[], issues: ImportIssue[]): AssetCsvColumn[] | null {
  const header = cells.map((c) => c.trim().toLowerCase());
  const known = new Set<string>(assetCsvColumns);
  const seen = new Set<string>();
  header.forEach((name, i) => {
    if (!known.has(name)) issues.push({ row: 1, column: name || `column ${i + 1}`, message: `Unknown column "${name}". The columns are: ${assetCsvColumns.join(', ')}.` });
    else if (seen.has(name)) issues.push({ row: 1, column: name, message: `The column "${name}" appears twice.` });
    seen.add(name);
  });
  for (const need of REQUIRED) if (!seen.has(need)) issues.push({ row: 1, column: need, message: `The header has no "${need}" column.` });
  return issues.length ? null : (header as AssetCsvColumn[]);
}

function readRows(parsed: CsvParseResult, header: AssetCsvColumn[], issues: ImportIssue[]): Row[] {
  const rows: Row[] = [];
  for (const { row, cells } of parsed.records.slice(1)) {
    if (cells.length > header.length && cells.slice(header.length).some((c) => c.trim() !== '')) {
      issues.push({ row, column: null, message: `This row has ${cells.length} values but the header names ${header.length} columns.` });
      continue;
    }
    const byColumn: Row['cells'] = {};
    header.forEach((col, i) => (byColumn[col] = cells[i] ?? ''));
    const type = (byColumn.record_type ?? '').trim().toLowerCase() as AssetRecordType;
    if (!assetRecordTypes.includes(type)) {
      issues.push({ row, column: 'record_type', message: `record_type must be pipeline, site or point (got "${byColumn.record_type ?? ''}").` });
      continue;
    }
    const allowed = columnsOf(type);
    for (const col of header) {
      if (!allowed.has(col) && (byColumn[col] ?? '').trim() !== '') issues.push({ row, column: col, message: `A ${type} row leaves ${col} empty; that column is for another kind of row.` });
    }
    rows.push({ row, type, cells: byColumn });
  }
  return rows;
}

function validate<T>(r: Row, issues: ImportIssue[]): T | null {
  const result = schemas[r.type].safeParse(rowToFields(r.type, r.cells));
  if (result.success) return result.data as T;
  for (const issue of result.error.issues) {
    const field = String(issue.path[0] ?? '');
    issues.push({ row: r.row, column: fieldColumns[r.type][field]?.[0] ?? null, message: issue.message });
  }
  return null;
}

const siteKey = (pipelineCode: string, name: string) => `${pipelineCode}\u0000${name.toLowerCase()}`;

export function planAssetImport(parsed: CsvParseResult, snapshot: ImportSnapshot): { issues: ImportIssue[]; plan: AssetImportPlan; rows: number } {
  const issues: ImportIssue[] = parsed.errors.map((e) => ({ row: e.row, column: null, message: e.message }));
  const plan: AssetImportPlan = { pipelines: [], sites: [], points: [] };
  if (parsed.records.length === 0) {
    issues.push({ row: 0, column: null, message: 'The file is empty. The first row names the columns; see docs/assets.md.' });
    return { issues, plan, rows: 0 };
  }
  const header = readHeader(parsed.records[0].cells, issues);
  if (!header) return { issues, plan, rows: parsed.records.length - 1 };
  if (parsed.records.length - 1 > MAX_IMPORT_ROWS) {
    issues.push({ row: 0, column: null, message: `The file has more than ${MAX_IMPORT_ROWS} rows; split it into smaller files.` });
    return { issues, plan, rows: parsed.records.length - 1 };
  }
  const rows = readRows(parsed, header, issues);

  const knownPipelines = new Map(snapshot.pipelines.map((p) => [p.code, p]));
  const filePipelines = new Map<string, { row: number; start: number; end: number }>();
  for (const r of rows.filter((x) => x.type === 'pipeline')) {
    const input = validate<PipelineInput>(r, issues);
    if (!input) continue;
    const twin = filePipelines.get(input.code);
    if (twin) {
      issues.push({ row: r.row, column: 'pipeline_code', message: `Pipeline ${input.code} is already on row ${twin.row}.` });
      continue;
    }
    filePipelines.set(input.code, { row: r.row, start: input.startPosition, end: input.endPosition });
    const existing = knownPipelines.get(input.code);
    plan.pipelines.push({ row: r.row, action: existing ? 'update' : 'create', id: existing?.id ?? null, input });
  }

  // Where each row's pipeline runs, after the import: the file's figures win over the register's.
  const rangeOf = (code: string) => {
    const f = filePipelines.get(code);
    if (f) return { start: f.start, end: f.end };
    const k = knownPipelines.get(code);
    return k ? { start: k.startPosition, end: k.endPosition } : null;
  };
  const onLine = (r: Row, code: string, position: number): boolean => {
    const range = rangeOf(code);
    if (!range) {
      const pending = rows.some((x) => x.type === 'pipeline' && x.cells.pipeline_code?.trim().toUpperCase() === code);
      if (!pending) issues.push({ row: r.row, column: 'pipeline_code', message: `There is no pipeline ${code || '(blank)'} in this file or in the register.` });
      return false;
    }
    if (position < range.start || position > range.end) {
      issues.push({ row: r.row, column: 'position', message: `Position ${position} is off pipeline ${code}, which runs from ${range.start} to ${range.end}.` });
      return false;
    }
    return true;
  };

  const knownSites = new Set(snapshot.sites.map((s) => siteKey(s.pipelineCode, s.name)));
  const fileSites = new Map<string, number>();
  for (const r of rows.filter((x) => x.type === 'site')) {
    const code = (r.cells.pipeline_code ?? '').trim().toUpperCase();
    const input = validate<SiteInput>(r, issues);
    if (!input || !onLine(r, code, input.position)) continue;
    const key = siteKey(code, input.name);
    const twin = fileSites.get(key);
    if (twin) {
      issues.push({ row: r.row, column: 'name', message: `Site "${input.name}" on ${code} is already on row ${twin}.` });
      continue;
    }
    fileSites.set(key, r.row);
    plan.sites.push({ row: r.row, action: knownSites.has(key) ? 'update' : 'create', pipelineCode: code, input });
  }

  const knownPoints = new Map(snapshot.points.map((p) => [p.tagCode, p]));
  const filePoints = new Map<string, number>();
  for (const r of rows.filter((x) => x.type === 'point')) {
    const code = (r.cells.pipeline_code ?? '').trim().toUpperCase();
    const input = validate<PointRecord>(r, issues);
    if (!input || !onLine(r, code, input.position)) continue;
    const twin = filePoints.get(input.tagCode);
    if (twin) {
      issues.push({ row: r.row, column: 'tag_code', message: `Tag code ${input.tagCode} is already on row ${twin}; tag codes are unique in the register.` });
      continue;
    }
    filePoints.set(input.tagCode, r.row);
    const existing = knownPoints.get(input.tagCode);
    if (existing && existing.pipelineCode !== code) {
      issues.push({ row: r.row, column: 'tag_code', message: `Tag code ${input.tagCode} is already used on pipeline ${existing.pipelineCode}; a point cannot move to another pipeline by import.` });
      continue;
    }
    plan.points.push({ row: r.row, action: existing ? 'update' : 'create', id: existing?.id ?? null, pipelineCode: code, input });
  }

  // A pipeline made shorter must not leave behind points or sites the file does not move.
  for (const p of plan.pipelines.filter((x) => x.action === 'update')) {
    const { startPosition: start, endPosition: end, code } = p.input;
    const left = [
      ...snapshot.points.filter((x) => x.pipelineCode === code && !filePoints.has(x.tagCode)).map((x) => ({ label: `point ${x.tagCode} at ${x.position}`, at: x.position })),
      ...snapshot.sites.filter((x) => x.pipelineCode === code && !fileSites.has(siteKey(code, x.name))).map((x) => ({ label: `site "${x.name}" at ${x.position}`, at: x.position })),
    ];
    const stranded = left.filter((x) => x.at < start || x.at > end).map((x) => x.label);
    if (stranded.length) issues.push({ row: p.row, column: 'start_position', message: `The new range ${start} to ${end} would leave ${stranded.join(', ')} off the line.` });
  }

  issues.sort((a, b) => a.row - b.row);
  return { issues, plan, rows: parsed.records.length - 1 };
}

export function summarise(plan: AssetImportPlan, issues: ImportIssue[], rows: number, applied: boolean): ImportReport {
  const count = (list: { action: Action }[]) => ({ create: list.filter((x) => x.action === 'create').length, update: list.filter((x) => x.action === 'update').length });
  return { valid: issues.length === 0, applied, rows, pipelines: count(plan.pipelines), sites: count(plan.sites), points: count(plan.points), errors: issues };
}
