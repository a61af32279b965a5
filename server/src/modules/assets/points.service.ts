import { QueryTypes, UniqueConstraintError, type Sequelize } from 'sequelize';
import type { Page } from '@shared/schemas/common.schema';
import { pointRecordSchema, type PointInput, type PointPatch, type PointsQuery } from '@shared/schemas/assets.schema';
import type { IsolationPoint } from '@shared/assets/types';
import type { PointRecord } from '@shared/assets/import-plan';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { parse } from '../../middleware/validate';
import { auditAsset, type AssetContext } from './asset-context';

export const POINT_SELECT = `SELECT ip.id, ip.pipeline_id AS "pipelineId", p.code AS "pipelineCode", p.name AS "pipelineName", ip.tag_code AS "tagCode", ip.kind,
  ip.position::float8 AS position, t.location_unit AS unit, ip.description, ip.valve_type AS "valveType", ip.normal_position AS "normalPosition",
  ip.remotely_operable AS "remotelyOperable", ip.updated_at AS "updatedAt"
  FROM isolation_points ip
  JOIN pipelines p ON p.tenant_id = ip.tenant_id AND p.id = ip.pipeline_id
  JOIN tenants t ON t.id = ip.tenant_id`;

const likeOf = (q: string) => `%${q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;

export async function listPoints(ctx: AssetContext, q: PointsQuery): Promise<Page<IsolationPoint>> {
  authorizeType(ctx.ability, 'read', 'IsolationPoint', { tenantId: ctx.tenantId }, 'isolation points');
  return withTenant(ctx.sequelize, ctx.tenantId, () => pointsPage(ctx.sequelize, ctx.tenantId, q));
}

async function pointsPage(sequelize: Sequelize, tenantId: string, q: PointsQuery): Promise<Page<IsolationPoint>> {
  const where = ['ip.tenant_id = :tenantId'];
  const replacements: Record<string, unknown> = { tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.pipelineId) {
    where.push('ip.pipeline_id = :pipelineId');
    replacements.pipelineId = q.pipelineId;
  }
  if (q.kind) {
    where.push('ip.kind = :kind');
    replacements.kind = q.kind;
  }
  if (q.q) {
    where.push('(ip.tag_code ILIKE :q OR ip.description ILIKE :q)');
    replacements.q = likeOf(q.q);
  }
  const filter = where.join(' AND ');
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM isolation_points ip WHERE ${filter}`, { replacements, type: QueryTypes.SELECT });
  const items = await sequelize.query<IsolationPoint>(`${POINT_SELECT} WHERE ${filter} ORDER BY p.code, ip.position, ip.tag_code LIMIT :limit OFFSET :offset`, { replacements, type: QueryTypes.SELECT });
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

export async function pointsOfPipeline(sequelize: Sequelize, tenantId: string, pipelineId: string): Promise<IsolationPoint[]> {
  return sequelize.query<IsolationPoint>(`${POINT_SELECT} WHERE ip.tenant_id = :tenantId AND ip.pipeline_id = :pipelineId ORDER BY ip.position, ip.tag_code`, {
    replacements: { tenantId, pipelineId },
    type: QueryTypes.SELECT,
  });
}

export async function getPoint(ctx: AssetContext, id: string): Promise<IsolationPoint & { tenantId: string }> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => authorizeRecord(ctx.ability, 'read', 'IsolationPoint', await findPoint(ctx.sequelize, ctx.tenantId, id), 'isolation point'));
}

async function findPoint(sequelize: Sequelize, tenantId: string, id: string, lock = false): Promise<(IsolationPoint & { tenantId: string }) | null> {
  const rows = await sequelize.query<IsolationPoint>(`${POINT_SELECT} WHERE ip.tenant_id = :tenantId AND ip.id = :id${lock ? ' FOR UPDATE OF ip' : ''}`, {
    replacements: { tenantId, id },
    type: QueryTypes.SELECT,
  });
  return rows[0] ? { ...rows[0], tenantId } : null;
}

async function tagTaken(sequelize: Sequelize, tenantId: string, tagCode: string, exceptId: string | null) {
  const rows = await sequelize.query<{ pipelineName: string; position: number }>(
    `SELECT p.name AS "pipelineName", ip.position::float8 AS position FROM isolation_points ip JOIN pipelines p ON p.tenant_id = ip.tenant_id AND p.id = ip.pipeline_id
     WHERE ip.tenant_id = :tenantId AND ip.tag_code = :tagCode AND (CAST(:exceptId AS uuid) IS NULL OR ip.id <> CAST(:exceptId AS uuid))`,
    { replacements: { tenantId, tagCode, exceptId }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

const tagConflict = (tagCode: string, on?: { pipelineName: string; position: number } | null) =>
  AppError.conflict(
    on ? `Tag code ${tagCode} is already used by the point at ${on.position} on ${on.pipelineName}. Tag codes are unique across the register.` : `Tag code ${tagCode} is already used in the register.`,
    { field: 'tagCode' },
  );

/** The pipeline a point goes on, locked so its range cannot change under us; null when it is not this tenant's. */
async function lockPipeline(sequelize: Sequelize, tenantId: string, pipelineId: string) {
  const rows = await sequelize.query<{ id: string; code: string; startPosition: number; endPosition: number }>(
    `SELECT id, code, start_position::float8 AS "startPosition", end_position::float8 AS "endPosition" FROM pipelines WHERE tenant_id = :tenantId AND id = :pipelineId FOR SHARE`,
    { replacements: { tenantId, pipelineId }, type: QueryTypes.SELECT },
  );
  return rows[0] ?? null;
}

function requireOnLine(position: number, line: { code: string; startPosition: number; endPosition: number }) {
  if (position < line.startPosition || position > line.endPosition) {
    throw AppError.validation('The point is not on the pipeline.', [
      { path: 'position', message: `Position ${position} is off ${line.code}, which runs from ${line.startPosition} to ${line.endPosition}.` },
    ]);
  }
}

const pointValues = (tenantId: string, p: PointRecord) => ({
  tenantId,
  tagCode: p.tagCode,
  kind: p.kind,
  position: p.position,
  description: p.description ?? null,
  valveType: p.valveType ?? null,
  normalPosition: p.normalPosition ?? null,
  remotelyOperable: p.remotelyOperable ?? null,
});

/** Plain row writes, shared with the CSV import (which has checked everything first). */
export async function insertPointRow(sequelize: Sequelize, tenantId: string, pipelineId: string, p: PointRecord): Promise<string> {
  const [row] = await sequelize.query<{ id: string }>(
    `INSERT INTO isolation_points (tenant_id, pipeline_id, tag_code, kind, position, description, valve_type, normal_position, remotely_operable)
     VALUES (:tenantId, :pipelineId, :tagCode, :kind, :position, :description, :valveType, :normalPosition, :remotelyOperable) RETURNING id`,
    { replacements: { ...pointValues(tenantId, p), pipelineId }, type: QueryTypes.SELECT },
  );
  return row.id;
}

export async function updatePointRow(sequelize: Sequelize, tenantId: string, id: string, p: PointRecord) {
  await sequelize.query(
    `UPDATE isolation_points SET tag_code = :tagCode, kind = :kind, position = :position, description = :description, valve_type = :valveType,
       normal_position = :normalPosition, remotely_operable = :remotelyOperable, updated_at = now()
     WHERE tenant_id = :tenantId AND id = :id`,
    { replacements: { ...pointValues(tenantId, p), id } },
  );
}

async function guardUnique<T>(tagCode: string, write: () => Promise<T>): Promise<T> {
  try {
    return await write();
  } catch (err) {
    // Two people adding the same tag at once: the unique key catches the one who checked first.
    if (err instanceof UniqueConstraintError) throw tagConflict(tagCode);
    throw err;
  }
}

export async function createPoint(ctx: AssetContext, input: PointInput): Promise<IsolationPoint> {
  authorizeType(ctx.ability, 'create', 'IsolationPoint', { tenantId: ctx.tenantId }, 'isolation points');
  return withTenant(ctx.sequelize, ctx.tenantId, () => insertPoint(ctx, input));
}

async function insertPoint(ctx: AssetContext, input: PointInput): Promise<IsolationPoint> {
  const { sequelize, tenantId } = ctx;
  const line = await lockPipeline(sequelize, tenantId, input.pipelineId);
  if (!line) throw AppError.validation('The pipeline was not found.', [{ path: 'pipelineId', message: 'Choose a pipeline of this register.' }]);
  requireOnLine(input.position, line);
  const taken = await tagTaken(sequelize, tenantId, input.tagCode, null);
  if (taken) throw tagConflict(input.tagCode, taken);
  const { pipelineId, ...record } = input;
  const id = await guardUnique(input.tagCode, () => insertPointRow(sequelize, tenantId, pipelineId, record));
  await auditAsset(ctx, { entityType: 'isolation_point', entityId: id, action: 'created', data: { tagCode: input.tagCode, pipeline: line.code, kind: input.kind, position: input.position } });
  return (await findPoint(sequelize, tenantId, id))!;
}

const VALVE_FIELDS = ['valveType', 'normalPosition', 'remotelyOperable'] as const;

export async function updatePoint(ctx: AssetContext, id: string, patch: PointPatch): Promise<IsolationPoint> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const current = authorizeRecord(ctx.ability, 'update', 'IsolationPoint', await findPoint(ctx.sequelize, ctx.tenantId, id, true), 'isolation point');
    return applyPointPatch(ctx, current, patch);
  });
}

async function applyPointPatch(ctx: AssetContext, current: IsolationPoint, patch: PointPatch): Promise<IsolationPoint> {
  const { sequelize, tenantId } = ctx;
  // Only the record's own fields: the row also carries ids, names and times, which the strict schema refuses.
  const merged: Record<string, unknown> = Object.fromEntries(Object.entries({ ...current, ...patch }).filter(([k]) => k in pointRecordSchema.shape));
  // Turning a valve into something else drops the valve details unless the change sets them.
  if (patch.kind && patch.kind !== 'block_valve') for (const f of VALVE_FIELDS) if (!(f in patch)) merged[f] = null;
  const record = parse(pointRecordSchema, merged, 'isolation point');
  const line = (await lockPipeline(sequelize, tenantId, current.pipelineId))!;
  requireOnLine(record.position, line);
  if (record.tagCode !== current.tagCode) {
    const taken = await tagTaken(sequelize, tenantId, record.tagCode, current.id);
    if (taken) throw tagConflict(record.tagCode, taken);
  }
  await guardUnique(record.tagCode, () => updatePointRow(sequelize, tenantId, current.id, record));
  const changed = Object.keys(patch).filter((k) => (patch as Record<string, unknown>)[k] !== (current as unknown as Record<string, unknown>)[k]);
  await auditAsset(ctx, { entityType: 'isolation_point', entityId: current.id, action: 'updated', data: { tagCode: record.tagCode, fields: changed } });
  return (await findPoint(sequelize, tenantId, current.id))!;
}
