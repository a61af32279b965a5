// The numbers for management.
//   GET /api/reports/overview   tenant admin, authoriser, auditor (read Report): stage times, suspensions by cause, qualifications expiring,
//                               permits by state over time, gas tests and checks on time, isolations in place by age
import { Router } from 'express';
import { reportsQuerySchema } from '@shared/schemas/reports.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { onReadPool } from '../../lib/read-replica';
import { reportsOverview } from './reports.service';

export function createReportsRouter(deps: AppDeps) {
  const router = Router();
  router.use('/reports', requireTenant);

  router.get('/reports/overview', async (req, res) => {
    const caller = actorOf(req);
    const q = parse(reportsQuerySchema, req.query, 'query');
    res.setHeader('Cache-Control', 'no-store');
    res.json(await onReadPool(deps, req, caller.actor.tenantId, (d) => reportsOverview(d, caller, q)));
  });

  return router;
}
