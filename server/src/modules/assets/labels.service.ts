// QR labels for locks and tags: what a label sheet prints, and what a scanned label opens.
import { QueryTypes, type Sequelize } from 'sequelize';
import { subject as caslSubject } from '@casl/ability';
import type { InventoryKind } from '@shared/assets/inventory-state';
import { LABEL_SHEET_MAX, type LabelSheetQuery } from '@shared/schemas/labels.schema';
import type { InventoryState, LocationUnit } from '@shared/schemas/assets.schema';
import type { StepKind } from '@shared/schemas/isolation.schema';
import type { PermitState } from '@shared/permit/states';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import type { ScanResult } from '@shared/types/labels';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { findPermit } from '../permits/permits.repository';
import type { AssetContext } from './asset-context';

// Only these two names ever reach the SQL below.
const TABLE: Record<InventoryKind, 'locks' | 'tags'> = { lock: 'locks', tag: 'tags' };
const COLUMN: Record<InventoryKind, 'lock_id' | 'tag_id'> = { lock: 'lock_id', tag: 'tag_id' };
const SUBJECT: Record<InventoryKind, 'Lock' | 'Tag'> = { lock: 'Lock', tag: 'Tag' };

/** One label on the sheet. */
export interface LabelItem {
  kind: InventoryKind;
  number: string;
  /** The short line under the number, in plain words. */
  line: string;
}

export interface LabelSheet {
  tenantName: string;
  title: string;
  labels: LabelItem[];
}

const stockLine: Record<InventoryKind, string> = {
  lock: 'Isolation lock. Do not remove. Scan to see its permit.',
  tag: 'Danger: do not operate. Scan to see its permit.',
};

async function tenantName(sequelize: Sequelize, tenantId: string): Promise<string> {
  const [row] = await sequelize.query<{ name: string }>(`SELECT name FROM tenants WHERE id = :tenantId`, { replacements: { tenantId }, type: QueryTypes.SELECT });
  return row?.name ?? '';
}

/** Labels for the tenant's stock of locks or tags, narrowed like the register's list. */
export async function stockLabelSheet(ctx: AssetContext, q: LabelSheetQuery): Promise<LabelSheet> {
  authorizeType(ctx.ability, 'read', SUBJECT[q.kind], { tenantId: ctx.tenantId }, `${q.kind}s`);
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const where = ['x.tenant_id = :tenantId'];
    const replacements: Record<string, unknown> = { tenantId: ctx.tenantId, limit: LABEL_SHEET_MAX + 1 };
    if (q.state) {
      where.push('x.state = :state');
      replacements.state = q.state;
    }
    if (q.q) {
      where.push('x.number ILIKE :q');
      replacements.q = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
    }
    const rows = await ctx.sequelize.query<{ number: string }>(`SELECT x.number FROM ${TABLE[q.kind]} x WHERE ${where.join(' AND ')} ORDER BY length(x.number), x.number LIMIT :limit`, {
      replacements,
      type: QueryTypes.SELECT,
    });
    if (rows.length > LABEL_SHEET_MAX)
      throw AppError.validation(`That is more than ${LABEL_SHEET_MAX} ${q.kind}s. Narrow the list by state or number and print in parts.`, [{ path: 'q', message: 'Narrow the list.' }]);
    if (!rows.length) throw AppError.validation(`No ${q.kind}s match, so there is nothing to print.`, [{ path: 'q', message: `No ${q.kind}s match.` }]);
    return {
      tenantName: await tenantName(ctx.sequelize, ctx.tenantId),
      title: q.kind === 'lock' ? 'Lock labels' : 'Danger tag labels',
      labels: rows.map((r) => ({ kind: q.kind, number: r.number, line: stockLine[q.kind] })),
    };
  });
}

/** Labels for every lock and tag recorded on a permit's isolation steps, each once, in the plan's order. */
export async function permitLabelSheet(ctx: AssetContext, permitId: string): Promise<LabelSheet & { permitNumber: string }> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const permit = authorizeRecord(ctx.ability, 'read', 'Permit', await findPermit(ctx.sequelize, ctx.tenantId, permitId), 'permit');
    const rows = await ctx.sequelize.query<{ kind: InventoryKind; number: string; point: string }>(
      `SELECT k.kind, k.number, coalesce(ip.tag_code, s.temp_label) AS point
         FROM isolation_steps s
         LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         CROSS JOIN LATERAL (
           SELECT 'lock' AS kind, l.number, 0 AS o FROM locks l WHERE l.tenant_id = s.tenant_id AND l.id = s.lock_id
           UNION ALL
           SELECT 'tag', t.number, 1 FROM tags t WHERE t.tenant_id = s.tenant_id AND t.id = s.tag_id
         ) k
        WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId
        ORDER BY s.seq, k.o`,
      { replacements: { tenantId: ctx.tenantId, permitId }, type: QueryTypes.SELECT },
    );
    const seen = new Set<string>();
    const labels: LabelItem[] = [];
    for (const r of rows) {
      const key = `${r.kind} ${r.number}`;
      if (seen.has(key)) continue;
      seen.add(key);
      labels.push({ kind: r.kind, number: r.number, line: `Permit ${permit.number}, ${r.point}. Scan to see its state.` });
    }
    if (!labels.length) throw AppError.unprocessable('No lock or tag is recorded on this permit yet. They are recorded when each step is applied.');
    return { tenantName: await tenantName(ctx.sequelize, ctx.tenantId), title: `Labels for permit ${permit.number}`, labels, permitNumber: permit.number };
  });
}

interface PlacementRow {
  stepId: string;
  stepStatus: 'applied' | 'verified';
  stepKind: StepKind;
  heldByName: string | null;
  appliedAt: Date | null;
  pointId: string | null;
  pointLabel: string;
  pointDescription: string | null;
  pipelineName: string;
  position: number;
  unit: LocationUnit;
  permitId: string;
}

/**
 * What a scanned label opens: the lock (or tag) by its number — or by its id, for a label printed
 * with one — and the isolation it is on now. The step and permit are named only to someone who may
 * read that permit; the point is the register's, which everyone in the tenant reads.
 */
export async function lookUpLabel(ctx: AssetContext, kind: InventoryKind, code: string): Promise<ScanResult<Date>> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const byId = /^[0-9A-F]{8}-[0-9A-F]{4}-[0-9A-F]{4}-[0-9A-F]{4}-[0-9A-F]{12}$/i.test(code);
    const [found] = await ctx.sequelize.query<{ id: string; number: string; state: InventoryState; holderName: string | null }>(
      `SELECT x.id, x.number, x.state, u.name AS "holderName" FROM ${TABLE[kind]} x LEFT JOIN users u ON u.id = x.holder_user_id
        WHERE x.tenant_id = :tenantId AND (x.number = :code${byId ? ' OR x.id = CAST(:code AS uuid)' : ''})
        ORDER BY (x.number = :code) DESC LIMIT 1`,
      { replacements: { tenantId: ctx.tenantId, code }, type: QueryTypes.SELECT },
    );
    const item = authorizeRecord(ctx.ability, 'read', SUBJECT[kind], found ? { ...found, tenantId: ctx.tenantId } : null, kind);
    const [at] = await ctx.sequelize.query<PlacementRow>(
      `SELECT s.id AS "stepId", s.status AS "stepStatus", s.kind AS "stepKind", coalesce(uh.name, ua.name) AS "heldByName", s.applied_at AS "appliedAt",
              s.point_id AS "pointId", coalesce(ip.tag_code, s.temp_label) AS "pointLabel", ip.description AS "pointDescription",
              pl.name AS "pipelineName", coalesce(ip.position, s.temp_position)::float8 AS position, t.location_unit AS unit, s.permit_id AS "permitId"
         FROM isolation_steps s
         JOIN permits p ON p.tenant_id = s.tenant_id AND p.id = s.permit_id
         JOIN pipelines pl ON pl.tenant_id = p.tenant_id AND pl.id = p.pipeline_id
         JOIN tenants t ON t.id = s.tenant_id
         LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         LEFT JOIN users ua ON ua.id = s.applied_by
         LEFT JOIN users uh ON uh.id = s.held_by
        WHERE s.tenant_id = :tenantId AND s.${COLUMN[kind]} = :id AND s.status IN (:inPlace)
        LIMIT 1`,
      { replacements: { tenantId: ctx.tenantId, id: item.id, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
    );
    const base = { kind, id: item.id, number: item.number, state: item.state, holderName: item.holderName };
    if (!at) return { ...base, placement: null };
    const permit = await findPermit(ctx.sequelize, ctx.tenantId, at.permitId);
    const readable = permit !== null && ctx.ability.can('read', caslSubject('Permit', { ...permit }));
    return {
      ...base,
      placement: {
        pointId: at.pointId,
        pointLabel: at.pointLabel,
        pointDescription: at.pointDescription,
        pipelineName: at.pipelineName,
        position: at.position,
        unit: at.unit,
        step: readable ? { id: at.stepId, status: at.stepStatus, kind: at.stepKind, appliedByName: at.heldByName, appliedAt: at.appliedAt } : null,
        permit: readable ? { id: permit.id, number: permit.number, title: permit.title, state: permit.state as PermitState } : null,
      },
    };
  });
}
