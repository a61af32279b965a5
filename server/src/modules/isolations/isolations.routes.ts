// Isolation plans, steps and the control room's live board.
//   GET  /api/permits/:id/isolations                   readers of the permit: the plan and each step's record
//   PUT  /api/permits/:id/isolations                   who may edit the draft permit: replace the plan
//   GET  /api/permits/:id/isolations/proposal          readers of the permit: a proposed plan for ?fromPosition&toPosition
//   POST /api/permits/:id/isolations/:stepId/apply     isolation technician (lockout/tagout qualified)
//   POST /api/permits/:id/isolations/:stepId/verify    isolation technician other than the applier (isolation verifier qualified)
//   POST /api/permits/:id/isolations/:stepId/acknowledge control room (remote inhibited, applied, removed); authoriser (plug warnings)
//   POST /api/permits/:id/isolations/:stepId/remove    isolation technician, after hand-back; someone else's lock or tag only under a recorded exception, signed
//   POST /api/permits/:id/isolations/:stepId/removal-exception  authoriser: the lock's owner is not on site (signed record)
//   POST /api/permits/:id/isolations/:stepId/transfer  the person holding the step's lock or tag: shift change to the oncoming person, both signing
//   POST /api/permits/:id/isolations/provings          isolation technician who applied none of the isolating devices (isolation verifier qualified): start the hold test
//   POST /api/permits/:id/isolations/provings/:provingId/end   the same: its end reading
//   GET  /api/board                                    control room, authoriser, tenant admin, auditor
//   GET  /api/board/stream                             the same: text/event-stream of changes
import { Router, type Request } from 'express';
import {
  acknowledgeStepInputSchema, applyStepInputSchema, boardQuerySchema, proposePlanQuerySchema, removalExceptionInputSchema, removeStepInputSchema, savePlanInputSchema, verifyStepInputSchema,
} from '@shared/schemas/isolation.schema';
import { uuidSchema } from '@shared/schemas/common.schema';
import { endProvingInputSchema, startProvingInputSchema } from '@shared/schemas/isolation-proving.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { authorizeType } from '../../lib/authorize';
import { changeFeed } from '../../lib/change-feed';
import { clientIp } from '../../lib/client-ip';
import { drainState } from '../../lib/draining';
import type { CallerContext } from '../../lib/caller';
import { getPlan, proposePlan, savePlan } from './isolation-plan.service';
import { acknowledgeStep, applyStep, removeStep, verifyStep } from './isolation-steps.service';
import { recordRemovalException } from './removal-exceptions.service';
import { transferLock } from './lock-transfer.service';
import { lockTransferInputSchema } from '@shared/schemas/lock-transfer.schema';
import { endProving, startProving } from './isolation-proving.service';
import { boardSnapshot, sendBoardSnapshot } from './board-cache';
import { onReadPool } from '../../lib/read-replica';

export function createIsolationsRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/permits', '/board'], requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });
  const ids = (req: Request) => ({ permitId: parse(uuidSchema, req.params.id, 'path'), stepId: parse(uuidSchema, req.params.stepId ?? '00000000-0000-4000-8000-000000000000', 'path') });

  router.get('/permits/:id/isolations', async (req, res) => {
    res.json(await getPlan(deps, caller(req), ids(req).permitId));
  });
  router.put('/permits/:id/isolations', async (req, res) => {
    res.json(await savePlan(deps, caller(req), ids(req).permitId, parse(savePlanInputSchema, req.body, 'isolation plan')));
  });
  router.get('/permits/:id/isolations/proposal', async (req, res) => {
    const q = parse(proposePlanQuerySchema, req.query, 'query');
    res.json(await proposePlan(deps, caller(req), ids(req).permitId, q.fromPosition, q.toPosition));
  });
  router.post('/permits/:id/isolations/provings', async (req, res) => {
    res.status(201).json(await startProving(deps, caller(req), ids(req).permitId, parse(startProvingInputSchema, req.body, 'hold test')));
  });
  router.post('/permits/:id/isolations/provings/:provingId/end', async (req, res) => {
    const provingId = parse(uuidSchema, req.params.provingId, 'path');
    res.json(await endProving(deps, caller(req), ids(req).permitId, provingId, parse(endProvingInputSchema, req.body, 'hold test')));
  });
  router.post('/permits/:id/isolations/:stepId/apply', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.json(await applyStep(deps, caller(req), permitId, stepId, parse(applyStepInputSchema, req.body, 'isolation')));
  });
  router.post('/permits/:id/isolations/:stepId/verify', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.json(await verifyStep(deps, caller(req), permitId, stepId, parse(verifyStepInputSchema, req.body, 'verification')));
  });
  router.post('/permits/:id/isolations/:stepId/acknowledge', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.json(await acknowledgeStep(deps, caller(req), permitId, stepId, parse(acknowledgeStepInputSchema, req.body, 'acknowledgement')));
  });
  router.post('/permits/:id/isolations/:stepId/remove', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.json(await removeStep(deps, caller(req), permitId, stepId, parse(removeStepInputSchema, req.body, 'removal')));
  });
  router.post('/permits/:id/isolations/:stepId/removal-exception', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.status(201).json(await recordRemovalException(deps, caller(req), permitId, stepId, parse(removalExceptionInputSchema, req.body, 'removal exception')));
  });
  router.post('/permits/:id/isolations/:stepId/transfer', async (req, res) => {
    const { permitId, stepId } = ids(req);
    res.json(await transferLock(deps, caller(req), permitId, stepId, parse(lockTransferInputSchema, req.body, 'handover')));
  });

  router.get('/board', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Board', { tenantId: actor.tenantId }, 'the isolation board');
    const q = parse(boardQuerySchema, req.query, 'query');
    // A read that tolerates a little lag: on the standby when it is caught up (lib/read-replica.ts).
    await sendBoardSnapshot(req, res, await onReadPool(deps, req, actor.tenantId, (d) => boardSnapshot(d, actor.tenantId, q)));
  });

  router.get('/board/stream', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Board', { tenantId: actor.tenantId }, 'the isolation board');
    const feed = changeFeed(deps);
    const unsubscribe = feed.subscribe((change) => {
      // Only this tenant's changes; "resync" goes to everyone after the feed reconnects.
      if (change.tenantId !== actor.tenantId && change.tenantId !== '*') return;
      // Every audit event is announced too (for the permit screens' live stream); the board's own changes
      // are announced by the services that change what it shows, so these would only refetch it twice.
      if (change.kind === 'audit') return;
      const { tenantId: _t, ...rest } = change;
      res.write(`event: change\ndata: ${JSON.stringify(rest)}\n\n`);
    });
    const heartbeat = setInterval(() => res.write(`: keep-alive\n\n`), 25_000);
    // A process shutting down ends the stream with a retry hint: the screen reconnects (to another process) and refetches on "ready".
    const undrain = drainState(deps.config).onDrain(() => {
      if (!res.writableEnded) res.end(`retry: 1000\nevent: closing\ndata: {}\n\n`);
    });
    // The response's close, not the request's: a request without a body can report "close" as soon as it is read.
    res.on('close', () => {
      clearInterval(heartbeat);
      unsubscribe();
      undrain();
    });
    res.writeHead(200, { 'Content-Type': 'text/event-stream', 'Cache-Control': 'no-store', Connection: 'keep-alive', 'X-Accel-Buffering': 'no' });
    res.flushHeaders();
    // "ready" only once LISTEN is in place, so a client that refetches on "ready" misses nothing after it.
    await feed.whenListening();
    if (!res.writableEnded && !res.destroyed) res.write(`retry: 2000\nevent: ready\ndata: {}\n\n`);
  });

  return router;
}
