// The crew's personal locks on a permit's lockbox (group lockout per person).
//   POST /api/permits/:id/crew/sign-on    a contractor lead, isolation technician or gas tester of the permit's contractor, lockout/tagout qualified: put their own personal lock on
//   POST /api/permits/:id/crew/sign-off   the person whose personal lock is on: take it off (nobody else)
import { Router, type Request } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import { crewSignOffInputSchema, crewSignOnInputSchema } from '@shared/schemas/crew.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { signOff, signOn } from './crew.service';

export function createCrewRouter(deps: AppDeps) {
  const router = Router();
  router.use('/permits', requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });

  router.post('/permits/:id/crew/sign-on', async (req, res) => {
    const permitId = parse(uuidSchema, req.params.id, 'path');
    res.json(await signOn(deps, caller(req), permitId, parse(crewSignOnInputSchema, req.body, 'sign-on')));
  });
  router.post('/permits/:id/crew/sign-off', async (req, res) => {
    const permitId = parse(uuidSchema, req.params.id, 'path');
    res.json(await signOff(deps, caller(req), permitId, parse(crewSignOffInputSchema, req.body ?? {}, 'sign-off')));
  });
  return router;
}
