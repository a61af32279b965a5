import { QueryTypes, UniqueConstraintError, type Sequelize } from 'sequelize';
import type { Page } from '@shared/schemas/common.schema';
import { pipelineInputSchema, type PipelineInput, type PipelinePatch, type PipelinesQuery, type SiteInput } from '@shared/schemas/assets.schema';
import { outsideDiameter, resolveInsideDiameter } from '@shared/assets/inside-diameter';
import { deriveSegments } from '@shared/assets/segments';
import type { PipelineDetail, PipelineSite, PipelineSummary } from '@shared/assets/types';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { zodDetails } from '../../middleware/validate';
import { auditAsset, type AssetContext } from './asset-context';
import { pointsOfPipeline } from './points.service';

const SUMMARY_COLUMNS = `p.id, p.code, p.name, p.product, p.nps::float8 AS nps, p.schedule, p.inside_diameter_in::float8 AS "insideDiameterIn",
  p.mop_psig::float8 AS "mopPsig", p.start_position::float8 AS "startPosition", p.end_position::float8 AS "endPosition", t.location_unit AS unit,
  (SELECT count(*)::int FROM isolation_points ip WHERE ip.tenant_id = p.tenant_id AND ip.pipeline_id = p.id) AS "pointCount",
  (SELECT count(*)::int FROM isolation_points ip WHERE ip.tenant_id = p.tenant_id AND ip.pipeline_id = p.id AND ip.kind = 'block_valve') AS "valveCount"`;

const likeOf = (q: string) => `%${q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;

export async function listPipelines(ctx: AssetContext, q: PipelinesQuery): Promise<Page<PipelineSummary>> {
  authorizeType(ctx.ability, 'read', 'Pipeline', { tenantId: ctx.tenantId }, 'pipelines');
  return withTenant(ctx.sequelize, ctx.tenantId, () => pipelinesPage(ctx.sequelize, ctx.tenantId, q));
}

async function pipelinesPage(sequelize: Sequelize, tenantId: string, q: PipelinesQuery): Promise<Page<PipelineSummary>> {
  const where = ['p.tenant_id = :tenantId'];
  const replacements: Record<string, unknown> = { tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.q) {
    where.push('(p.code ILIKE :q OR p.name ILIKE :q)');
    replacements.q = likeOf(q.q);
  }
  if (q.product) {
    where.push('p.product = :product');
    replacements.product = q.product;
  }
  const filter = where.join(' AND ');
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM pipelines p WHERE ${filter}`, { replacements, type: QueryTypes.SELECT });
  const items = await sequelize.query<PipelineSummary>(`SELECT ${SUMMARY_COLUMNS} FROM pipelines p JOIN tenants t ON t.id = p.tenant_id WHERE ${filter} ORDER BY p.code LIMIT :limit OFFSET :offset`, {
    replacements,
    type: QueryTypes.SELECT,
  });
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

type PipelineRow = Omit<PipelineDetail, 'sites' | 'points' | 'segments' | 'outsideDiameterIn'> & { tenantId: string };

export async function findPipelineRow(sequelize: Sequelize, tenantId: string, id: string, lock = false): Promise<PipelineRow | null> {
  const rows = await sequelize.query<PipelineRow>(
    `SELECT ${SUMMARY_COLUMNS}, p.tenant_id AS "tenantId", p.wall_thickness_in::float8 AS "wallThicknessIn", p.inside_diameter_source AS "insideDiameterSource",
            p.notes, p.created_at AS "createdAt", p.updated_at AS "updatedAt"
     FROM pipelines p JOIN tenants t ON t.id = p.tenant_id WHERE p.tenant_id = :tenantId AND p.id = :id${lock ? ' FOR UPDATE OF p' : ''}`,
    { replacements: { tenantId, id }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

export async function sitesOf(sequelize: Sequelize, tenantId: string, pipelineId: string): Promise<PipelineSite[]> {
  return sequelize.query<PipelineSite>(`SELECT id, name, position::float8 AS position FROM pipeline_sites WHERE tenant_id = :tenantId AND pipeline_id = :pipelineId ORDER BY position, name`, {
    replacements: { tenantId, pipelineId },
    type: QueryTypes.SELECT,
  });
}

export async function getPipeline(ctx: AssetContext, id: string): Promise<PipelineDetail & { tenantId: string }> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => authorizeRecord(ctx.ability, 'read', 'Pipeline', await loadPipeline(ctx.sequelize, ctx.tenantId, id), 'pipeline'));
}

async function loadPipeline(sequelize: Sequelize, tenantId: string, id: string): Promise<(PipelineDetail & { tenantId: string }) | null> {
  const row = await findPipelineRow(sequelize, tenantId, id);
  if (!row) return null;
  const [sites, points] = [await sitesOf(sequelize, tenantId, id), await pointsOfPipeline(sequelize, tenantId, id)];
  return { ...row, outsideDiameterIn: outsideDiameter(row.nps), sites, points, segments: deriveSegments(points) };
}

function rowValues(tenantId: string, p: PipelineInput) {
  const bore = resolveInsideDiameter(p);
  return {
    tenantId,
    code: p.code,
    name: p.name,
    product: p.product,
    nps: p.nps,
    schedule: p.schedule ?? null,
    wall: p.wallThicknessIn ?? null,
    bore: bore.idIn,
    boreSource: bore.source,
    mop: p.mopPsig,
    start: p.startPosition,
    end: p.endPosition,
    notes: p.notes ?? null,
  };
}

/** Plain row writes, shared with the CSV import (which has checked everything first). */
export async function insertPipelineRow(sequelize: Sequelize, tenantId: string, p: PipelineInput): Promise<string> {
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO pipelines (tenant_id, code, name, product, nps, schedule, wall_thickness_in, inside_diameter_in, inside_diameter_source, mop_psig, start_position, end_position, notes)
     VALUES (:tenantId, :code, :name, :product, :nps, :schedule, :wall, :bore, :boreSource, :mop, :start, :end, :notes) RETURNING id`,
    { replacements: rowValues(tenantId, p), type: QueryTypes.SELECT },
  );
  return row.id;
}

export async function updatePipelineRow(sequelize: Sequelize, tenantId: string, id: string, p: PipelineInput) {
  await sequelize.query(
    `UPDATE pipelines SET code = :code, name = :name, product = :product, nps = :nps, schedule = :schedule, wall_thickness_in = :wall, inside_diameter_in = :bore,
       inside_diameter_source = :boreSource, mop_psig = :mop, start_position = :start, end_position = :end, notes = :notes, updated_at = now()
     WHERE tenant_id = :tenantId AND id = :id`,
    { replacements: { ...rowValues(tenantId, p), id } },
  );
}

/** Adds the site or, when the pipeline already has one of that name (any case), moves it. */
export async function upsertSite(sequelize: Sequelize, tenantId: string, pipelineId: string, site: SiteInput) {
  await sequelize.query(
    `INSERT INTO pipeline_sites (tenant_id, pipeline_id, name, position) VALUES (:tenantId, :pipelineId, :name, :position)
     ON CONFLICT (tenant_id, pipeline_id, lower(name)) DO UPDATE SET name = EXCLUDED.name, position = EXCLUDED.position, updated_at = now()`,
    { replacements: { tenantId, pipelineId, ...site } },
  );
}

async function replaceSites(sequelize: Sequelize, tenantId: string, pipelineId: string, sites: SiteInput[]) {
  await sequelize.query(`DELETE FROM pipeline_sites WHERE tenant_id = :tenantId AND pipeline_id = :pipelineId AND NOT (lower(name) = ANY (ARRAY[:names]::text[]))`, {
    replacements: { tenantId, pipelineId, names: sites.length ? sites.map((s) => s.name.toLowerCase()) : [''] },
  });
  for (const s of sites) await upsertSite(sequelize, tenantId, pipelineId, s);
}

async function codeTaken(sequelize: Sequelize, tenantId: string, code: string, exceptId: string | null) {
  const rows = await sequelize.query<{ name: string }>(
    `SELECT name FROM pipelines WHERE tenant_id = :tenantId AND code = :code AND (CAST(:exceptId AS uuid) IS NULL OR id <> CAST(:exceptId AS uuid))`,
    { replacements: { tenantId, code, exceptId }, type: QueryTypes.SELECT },
  );
  return rows[0]?.name ?? null;
}

const codeConflict = (code: string, name?: string | null) =>
  AppError.conflict(name ? `Pipeline code ${code} is already used by "${name}".` : `Pipeline code ${code} is already used in the register.`, { field: 'code' });

async function guardUnique<T>(code: string, write: () => Promise<T>): Promise<T> {
  try {
    return await write();
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw codeConflict(code);
    throw err;
  }
}

export async function createPipeline(ctx: AssetContext, input: PipelineInput): Promise<PipelineDetail> {
  const { sequelize, tenantId } = ctx;
  authorizeType(ctx.ability, 'create', 'Pipeline', { tenantId }, 'pipelines');
  return withTenant(sequelize, tenantId, async () => {
    const taken = await codeTaken(sequelize, tenantId, input.code, null);
    if (taken) throw codeConflict(input.code, taken);
    const id = await guardUnique(input.code, () => insertPipelineRow(sequelize, tenantId, input));
    for (const s of input.sites ?? []) await upsertSite(sequelize, tenantId, id, s);
    await auditAsset(ctx, { entityType: 'pipeline', entityId: id, action: 'created', data: { code: input.code, name: input.name } });
    return (await loadPipeline(sequelize, tenantId, id))!;
  });
}

/** The record as the create schema sees it, so a change is checked against the whole pipeline. */
function asInput(row: PipelineRow, sites: PipelineSite[]): PipelineInput {
  return {
    code: row.code,
    name: row.name,
    product: row.product,
    nps: row.nps,
    schedule: row.schedule,
    wallThicknessIn: row.wallThicknessIn,
    insideDiameterIn: row.insideDiameterSource === 'explicit' ? row.insideDiameterIn : null,
    mopPsig: row.mopPsig,
    startPosition: row.startPosition,
    endPosition: row.endPosition,
    notes: row.notes,
    sites: sites.map((s) => ({ name: s.name, position: s.position })),
  };
}

export async function updatePipeline(ctx: AssetContext, id: string, patch: PipelinePatch): Promise<PipelineDetail> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const row = authorizeRecord(ctx.ability, 'update', 'Pipeline', await findPipelineRow(ctx.sequelize, ctx.tenantId, id, true), 'pipeline');
    return applyPipelinePatch(ctx, row, patch);
  });
}

async function applyPipelinePatch(ctx: AssetContext, row: PipelineRow, patch: PipelinePatch): Promise<PipelineDetail> {
  const { sequelize, tenantId } = ctx;
  const { id } = row;
  const before = asInput(row, await sitesOf(sequelize, tenantId, id));
  const merged = { ...before, ...patch };
  const checked = pipelineInputSchema.safeParse(merged);
  const details = checked.success ? [] : zodDetails(checked.error);
  // Points are not part of the record, so the schema cannot see them: check them beside it.
  const range = { start: merged.startPosition, end: merged.endPosition };
  const off = await sequelize.query<{ tagCode: string; position: number }>(
    `SELECT tag_code AS "tagCode", position::float8 AS position FROM isolation_points
     WHERE tenant_id = :tenantId AND pipeline_id = :id AND (position < :start OR position > :end) ORDER BY position`,
    { replacements: { tenantId, id, ...range }, type: QueryTypes.SELECT },
  );
  if (off.length) {
    const path = off.some((p) => p.position < range.start) ? 'startPosition' : 'endPosition';
    details.push({ path, message: `Move or change these points first: ${off.map((p) => `${p.tagCode} at ${p.position}`).join(', ')}.` });
  }
  if (!checked.success || details.length) throw AppError.validation('Some fields of the pipeline are missing or not valid.', details);
  const next = checked.data;
  if (next.code !== row.code) {
    const taken = await codeTaken(sequelize, tenantId, next.code, id);
    if (taken) throw codeConflict(next.code, taken);
  }
  await guardUnique(next.code, () => updatePipelineRow(sequelize, tenantId, id, next));
  if (patch.sites) await replaceSites(sequelize, tenantId, id, next.sites ?? []);
  const changed = Object.keys(patch).filter((k) => JSON.stringify((patch as Record<string, unknown>)[k]) !== JSON.stringify((before as Record<string, unknown>)[k]));
  await auditAsset(ctx, { entityType: 'pipeline', entityId: id, action: 'updated', data: { code: next.code, fields: changed } });
  return (await loadPipeline(sequelize, tenantId, id))!;
}
