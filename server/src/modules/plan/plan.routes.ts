// The week ahead: permits per pipeline on a timeline, with the ones that meet.
//   GET /api/plan   authoriser, control room, tenant admin, auditor (read Board): permits in the window, filtered by pipeline and contractor, and where they meet (per permit the first ten others, the rest counted)
import { Router } from 'express';
import { planQuerySchema } from '@shared/schemas/plan.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { onReadPool } from '../../lib/read-replica';
import { planFor } from './plan.service';

export function createPlanRouter(deps: AppDeps) {
  const router = Router();
  router.use('/plan', requireTenant);

  router.get('/plan', async (req, res) => {
    const caller = actorOf(req);
    const q = parse(planQuerySchema, req.query, 'query');
    res.setHeader('Cache-Control', 'no-store');
    res.json(await onReadPool(deps, req, caller.actor.tenantId, (d) => planFor(d, caller, q)));
  });

  return router;
}
