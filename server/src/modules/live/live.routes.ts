// Live status and alarms for the open screens.
//   GET /api/stream?permitId=…[&permitId=…][&after=seq]   anyone signed in to a tenant: text/event-stream of the
//       audit events of the named permits they may read (the others are left out; none readable answers 404),
//       each with its audit sequence number as id; Last-Event-ID (or after) replays what was missed.
import { Router } from 'express';
import { liveSeqSchema, liveStreamQuerySchema } from '@shared/schemas/live.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import { readablePermits } from './live.service';
import { streamLiveEvents } from './live-stream';

export function createLiveRouter(deps: AppDeps) {
  const router = Router();

  router.get('/stream', requireTenant, async (req, res) => {
    const { actor, ability, user } = actorOf(req);
    const q = parse(liveStreamQuerySchema, req.query, 'query');
    const header = req.get('last-event-id');
    const resumeAfter = header ? parse(liveSeqSchema, header, 'Last-Event-ID header') : q.after;
    const permits = await readablePermits(deps, { actor, ability, user, ip: clientIp(req) }, q.permitId);
    await streamLiveEvents(deps, req, res, { tenantId: actor.tenantId, userId: user.id, permits, after: resumeAfter });
  });

  return router;
}
