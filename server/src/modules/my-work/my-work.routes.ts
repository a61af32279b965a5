// "My work": the start page's lists for the signed-in person.
//   GET /api/my-work   any member of the active tenant: what waits for them now, per role they hold (the lists follow their CASL rules; a role they lack has none)
import { Router } from 'express';
import { myWorkQuerySchema } from '@shared/schemas/my-work.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import { myWorkFor } from './my-work.service';

export function createMyWorkRouter(deps: AppDeps) {
  const router = Router();
  router.use('/my-work', requireTenant);

  router.get('/my-work', async (req, res) => {
    parse(myWorkQuerySchema, req.query, 'query');
    // Counts change with every step anyone takes: never reuse a stored copy.
    res.setHeader('Cache-Control', 'no-store');
    res.json(await myWorkFor(deps, { ...actorOf(req), ip: clientIp(req) }));
  });

  return router;
}
