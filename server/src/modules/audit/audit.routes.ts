// Audit trail.
//   GET /api/audit/verify   tenant admin, authoriser, auditor: recompute the tenant's hash chain; lists every break found
//   GET /api/audit/events   tenant admin, authoriser, auditor: the tenant's events, newest first, paged
import { Router } from 'express';
import { QueryTypes } from 'sequelize';
import { pageQuerySchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { authorizeType } from '../../lib/authorize';
import { parse } from '../../middleware/validate';
import { withTenant } from '../../db/sequelize';
import { verifyChain } from './audit.service';

export function createAuditRouter(deps: AppDeps) {
  const router = Router();
  router.use('/audit', requireTenant);

  router.get('/audit/verify', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'verify_chain', 'AuditEvent', { tenantId: actor.tenantId }, 'the audit trail');
    const report = await withTenant(deps.sequelize, actor.tenantId, () => verifyChain(deps.sequelize, actor.tenantId));
    res.json(report);
  });

  router.get('/audit/events', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'AuditEvent', { tenantId: actor.tenantId }, 'the audit trail');
    const q = parse(pageQuerySchema, req.query, 'query');
    const result = await withTenant(deps.sequelize, actor.tenantId, async () => {
      const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM audit_events WHERE tenant_id = :t`, { replacements: { t: actor.tenantId }, type: QueryTypes.SELECT });
      const items = await deps.sequelize.query(
        `SELECT seq, entity_type AS "entityType", entity_id AS "entityId", permit_id AS "permitId", action, from_state AS "fromState", to_state AS "toState",
                actor_name AS "actorName", actor_role AS "actorRole", reason, occurred_at AS "occurredAt", hash
         FROM audit_events WHERE tenant_id = :t ORDER BY seq DESC LIMIT :limit OFFSET :offset`,
        { replacements: { t: actor.tenantId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize }, type: QueryTypes.SELECT },
      );
      return { items, total: n, page: q.page, pageSize: q.pageSize };
    });
    res.json(result);
  });
  return router;
}
