// The crew's personal locks on a permit's lockbox (group lockout per person).
//   POST /api/permits/:id/crew/sign-on    a contractor lead, isolation technician or gas tester of the permit's contractor, lockout/tagout qualified: put their own personal lock on
//   POST /api/permits/:id/crew/sign-off   the person whose personal lock is on: take it off (nobody else; not the last lock while work is live)
//   POST /api/permits/:id/crew/hand-over  the person whose personal lock is on: shift change, the oncoming person's lock goes on as theirs comes off, both signing
//   POST /api/permits/:id/crew/:userId/removal-exception  authoriser: that person is away with their personal lock on the box (signed record)
//   POST /api/permits/:id/crew/:userId/remove  another of the crew (lockout/tagout qualified): take the absent person's personal lock off under that record, signed
import { Router, type Request } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import { crewSignOffInputSchema, crewSignOnInputSchema } from '@shared/schemas/crew.schema';
import { crewHandOverInputSchema, crewLockRemovalInputSchema } from '@shared/schemas/lock-transfer.schema';
import { removalExceptionInputSchema } from '@shared/schemas/isolation.schema';
import { recordCrewLockException, removeCrewLockUnderException } from './crew-exceptions.service';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { handOver, signOff, signOn } from './crew.service';

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
  router.post('/permits/:id/crew/hand-over', async (req, res) => {
    const permitId = parse(uuidSchema, req.params.id, 'path');
    res.json(await handOver(deps, caller(req), permitId, parse(crewHandOverInputSchema, req.body, 'handover')));
  });
  router.post('/permits/:id/crew/:userId/removal-exception', async (req, res) => {
    const permitId = parse(uuidSchema, req.params.id, 'path');
    const userId = parse(uuidSchema, req.params.userId, 'path');
    res.status(201).json(await recordCrewLockException(deps, caller(req), permitId, userId, parse(removalExceptionInputSchema, req.body, 'removal exception')));
  });
  router.post('/permits/:id/crew/:userId/remove', async (req, res) => {
    const permitId = parse(uuidSchema, req.params.id, 'path');
    const userId = parse(uuidSchema, req.params.userId, 'path');
    res.json(await removeCrewLockUnderException(deps, caller(req), permitId, userId, parse(crewLockRemovalInputSchema, req.body, 'removal')));
  });
  return router;
}
