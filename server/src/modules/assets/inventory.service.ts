// Locks and tags: two tables of the same shape, so one service serves both.
import { QueryTypes, UniqueConstraintError, type Sequelize } from 'sequelize';
import type { Page } from '@shared/schemas/common.schema';
import type { InventoryInput, InventoryPatch, InventoryQuery, InventoryState } from '@shared/schemas/assets.schema';
import { inventoryChangeRefusal, type InventoryKind } from '@shared/assets/inventory-state';
import type { InventoryItem } from '@shared/assets/types';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { auditAsset, type AssetContext } from './asset-context';

// Only these two names ever reach the SQL below.
const TABLE: Record<InventoryKind, 'locks' | 'tags'> = { lock: 'locks', tag: 'tags' };
const LABEL: Record<InventoryKind, string> = { lock: 'Lock', tag: 'Tag' };
const SUBJECT: Record<InventoryKind, 'Lock' | 'Tag'> = { lock: 'Lock', tag: 'Tag' };

const select = (kind: InventoryKind) => `SELECT x.id, x.number, x.state, x.holder_user_id AS "holderUserId", u.name AS "holderName", x.notes, x.updated_at AS "updatedAt"
  FROM ${TABLE[kind]} x LEFT JOIN users u ON u.id = x.holder_user_id`;

export async function listInventory(ctx: AssetContext, kind: InventoryKind, q: InventoryQuery): Promise<Page<InventoryItem>> {
  authorizeType(ctx.ability, 'read', SUBJECT[kind], { tenantId: ctx.tenantId }, `${kind}s`);
  return withTenant(ctx.sequelize, ctx.tenantId, () => inventoryPage(ctx.sequelize, kind, ctx.tenantId, q));
}

async function inventoryPage(sequelize: Sequelize, kind: InventoryKind, tenantId: string, q: InventoryQuery): Promise<Page<InventoryItem>> {
  const where = ['x.tenant_id = :tenantId'];
  const replacements: Record<string, unknown> = { tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.state) {
    where.push('x.state = :state');
    replacements.state = q.state;
  }
  if (q.holderUserId) {
    where.push('x.holder_user_id = :holder');
    replacements.holder = q.holderUserId;
  }
  if (q.q) {
    where.push('x.number ILIKE :q');
    replacements.q = `%${q.q.replace(/[%_\\]/g, (c) => `\\${c}`)}%`;
  }
  const filter = where.join(' AND ');
  const [{ n }] = await sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM ${TABLE[kind]} x WHERE ${filter}`, { replacements, type: QueryTypes.SELECT });
  // Numbers are text ("L-001"); ordering by length first keeps L-9 before L-10 when nobody zero-pads.
  const items = await sequelize.query<InventoryItem>(`${select(kind)} WHERE ${filter} ORDER BY length(x.number), x.number LIMIT :limit OFFSET :offset`, { replacements, type: QueryTypes.SELECT });
  return { items, total: n, page: q.page, pageSize: q.pageSize };
}

export async function getInventory(ctx: AssetContext, kind: InventoryKind, id: string): Promise<InventoryItem & { tenantId: string }> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => authorizeRecord(ctx.ability, 'read', SUBJECT[kind], await findInventory(ctx.sequelize, kind, ctx.tenantId, id), kind));
}

async function findInventory(sequelize: Sequelize, kind: InventoryKind, tenantId: string, id: string, lock = false): Promise<(InventoryItem & { tenantId: string }) | null> {
  const rows = await sequelize.query<InventoryItem>(`${select(kind)} WHERE x.tenant_id = :tenantId AND x.id = :id${lock ? ' FOR UPDATE OF x' : ''}`, {
    replacements: { tenantId, id },
    type: QueryTypes.SELECT,
  });
  return rows[0] ? { ...rows[0], tenantId } : null;
}

async function requireMember(sequelize: Sequelize, tenantId: string, userId: string | null | undefined) {
  if (!userId) return;
  const rows = await sequelize.query(`SELECT 1 FROM memberships WHERE tenant_id = :tenantId AND user_id = :userId LIMIT 1`, { replacements: { tenantId, userId }, type: QueryTypes.SELECT });
  if (!rows.length) throw AppError.validation('The holder must be someone with a role in this tenant.', [{ path: 'holderUserId', message: 'Choose a person of this tenant.' }]);
}

async function numberTaken(sequelize: Sequelize, kind: InventoryKind, tenantId: string, number: string, exceptId: string | null) {
  const rows = await sequelize.query(`SELECT 1 FROM ${TABLE[kind]} WHERE tenant_id = :tenantId AND number = :number AND (CAST(:exceptId AS uuid) IS NULL OR id <> CAST(:exceptId AS uuid))`, {
    replacements: { tenantId, number, exceptId },
    type: QueryTypes.SELECT,
  });
  return rows.length > 0;
}

const numberConflict = (kind: InventoryKind, number: string) => AppError.conflict(`${LABEL[kind]} ${number} is already in the register; each ${kind} number is used once.`, { field: 'number' });

async function guardUnique<T>(kind: InventoryKind, number: string, write: () => Promise<T>): Promise<T> {
  try {
    return await write();
  } catch (err) {
    if (err instanceof UniqueConstraintError) throw numberConflict(kind, number);
    throw err;
  }
}

export async function createInventory(ctx: AssetContext, kind: InventoryKind, input: InventoryInput): Promise<InventoryItem> {
  authorizeType(ctx.ability, 'create', SUBJECT[kind], { tenantId: ctx.tenantId }, `${kind}s`);
  return withTenant(ctx.sequelize, ctx.tenantId, () => insertInventory(ctx, kind, input));
}

async function insertInventory(ctx: AssetContext, kind: InventoryKind, input: InventoryInput): Promise<InventoryItem> {
  const { sequelize, tenantId } = ctx;
  if (await numberTaken(sequelize, kind, tenantId, input.number, null)) throw numberConflict(kind, input.number);
  await requireMember(sequelize, tenantId, input.holderUserId);
  const state: InventoryState = input.state ?? 'in_store';
  if (state === 'retired' && input.holderUserId) throw AppError.unprocessable(`A retired ${kind} has no holder.`);
  const [row] = await guardUnique(kind, input.number, () =>
    sequelize.query<{ id: string }>(`INSERT INTO ${TABLE[kind]} (tenant_id, number, state, holder_user_id, notes) VALUES (:tenantId, :number, :state, :holder, :notes) RETURNING id`, {
      replacements: { tenantId, number: input.number, state, holder: input.holderUserId ?? null, notes: input.notes ?? null },
      type: QueryTypes.SELECT,
    }),
  );
  await auditAsset(ctx, { entityType: kind, entityId: row.id, action: 'created', toState: state, data: { number: input.number, holderUserId: input.holderUserId ?? null } });
  return (await findInventory(sequelize, kind, tenantId, row.id))!;
}

export async function updateInventory(ctx: AssetContext, kind: InventoryKind, id: string, patch: InventoryPatch): Promise<InventoryItem> {
  return withTenant(ctx.sequelize, ctx.tenantId, async () => {
    const current = authorizeRecord(ctx.ability, 'update', SUBJECT[kind], await findInventory(ctx.sequelize, kind, ctx.tenantId, id, true), kind);
    return applyInventoryPatch(ctx, kind, current, patch);
  });
}

async function applyInventoryPatch(ctx: AssetContext, kind: InventoryKind, current: InventoryItem, patch: InventoryPatch): Promise<InventoryItem> {
  const { sequelize, tenantId } = ctx;
  const { id } = current;
  const refusal = inventoryChangeRefusal(kind, current, patch);
  if (refusal) throw AppError.unprocessable(refusal);
  if (patch.number && patch.number !== current.number && (await numberTaken(sequelize, kind, tenantId, patch.number, id))) throw numberConflict(kind, patch.number);
  if (patch.holderUserId !== current.holderUserId) await requireMember(sequelize, tenantId, patch.holderUserId);
  const next = {
    number: patch.number ?? current.number,
    state: patch.state ?? current.state,
    // Retiring a lock takes it off its holder unless the change says otherwise.
    holder: patch.holderUserId !== undefined ? patch.holderUserId : patch.state === 'retired' ? null : current.holderUserId,
    notes: patch.notes !== undefined ? patch.notes : current.notes,
  };
  await guardUnique(kind, next.number, () =>
    sequelize.query(`UPDATE ${TABLE[kind]} SET number = :number, state = :state, holder_user_id = :holder, notes = :notes, updated_at = now() WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { ...next, tenantId, id },
    }),
  );
  await auditAsset(ctx, {
    entityType: kind,
    entityId: id,
    action: next.state !== current.state ? 'state_changed' : 'updated',
    fromState: current.state,
    toState: next.state,
    data: { number: next.number, holderUserId: next.holder, previousHolderUserId: current.holderUserId },
  });
  return (await findInventory(sequelize, kind, tenantId, id))!;
}
