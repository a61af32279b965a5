import type { Request } from 'express';
import type { Sequelize } from 'sequelize';
import type { AppAbility } from '@shared/abilities/define-ability';
import type { AppDeps } from '../../deps';
import { actorOf } from '../../middleware/authenticate';
import { clientIp } from '../../lib/client-ip';
import { appendAudit } from '../audit/audit.service';

/** Who is reading or changing the register, in which tenant, and when: what every check, write and audit event needs. */
export interface AssetContext {
  sequelize: Sequelize;
  tenantId: string;
  ability: AppAbility;
  who: { userId: string; name: string; role: string | null };
  now: Date;
  ip: string | null;
}

// The register is kept by tenant admins and authorisers; name that role on the audit trail.
const EDITOR_ROLES = ['tenant_admin', 'authoriser'];

export function assetContext(deps: AppDeps, req: Request): AssetContext {
  const { actor, ability, user } = actorOf(req);
  const roles = actor.memberships.map((m) => m.role);
  return {
    sequelize: deps.sequelize,
    tenantId: actor.tenantId,
    ability,
    who: { userId: user.id, name: user.name, role: roles.find((r) => EDITOR_ROLES.includes(r)) ?? roles[0] ?? null },
    now: deps.clock.now(),
    ip: clientIp(req),
  };
}

export interface AssetEvent {
  entityType: 'pipeline' | 'isolation_point' | 'lock' | 'tag' | 'asset_import';
  entityId: string;
  action: string;
  fromState?: string | null;
  toState?: string | null;
  data?: Record<string, unknown>;
}

/** Appends to the tenant's audit chain inside the caller's transaction. */
export function auditAsset(ctx: AssetContext, e: AssetEvent) {
  return appendAudit(ctx.sequelize, { tenantId: ctx.tenantId, actor: ctx.who, ip: ctx.ip, occurredAt: ctx.now, ...e });
}
