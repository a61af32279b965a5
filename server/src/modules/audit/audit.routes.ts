// Audit trail.
//   GET /api/audit/verify   tenant admin, authoriser, auditor: recompute the tenant's hash chain; lists every break found
//   GET /api/audit/events   tenant admin, authoriser, auditor: the tenant's events, newest first, paged
import { Router } from 'express';
import { pageQuerySchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { listAuditEvents, verifyTenantChain } from './audit.service';

export function createAuditRouter(deps: AppDeps) {
  const router = Router();
  router.use('/audit', requireTenant);

  router.get('/audit/verify', async (req, res) => {
    res.json(await verifyTenantChain(deps, actorOf(req)));
  });

  router.get('/audit/events', async (req, res) => {
    res.json(await listAuditEvents(deps, actorOf(req), parse(pageQuerySchema, req.query, 'query')));
  });
  return router;
}
