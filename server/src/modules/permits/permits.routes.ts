// Permits to work.
//   GET   /api/permits                     every tenant member who may read permits (contractors: their organisation's only)
//   POST  /api/permits                     contractor lead (own organisation), authoriser
//   GET   /api/permits/:id                 readers of that permit; includes the actions this caller may take now
//   PATCH /api/permits/:id                 the same people as POST, while the permit is a draft
//   POST  /api/permits/:id/transitions     by event: see shared/permit/state-machine.ts (eventAction) and docs/permissions.md
//   POST  /api/permits/:id/checklist       contractor lead (before work), authoriser (walk-down)
//   POST  /api/permits/:id/hot-work-stopped contractor lead: starts the fire watch
//   GET   /api/permits/:id/pdf             readers of that permit: the printable permit
import { Router } from 'express';
import { checklistUpdateSchema, createPermitInputSchema, permitsQuerySchema, transitionInputSchema, updatePermitInputSchema } from '@shared/schemas/permit.schema';
import { uuidSchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { createPermit, listPermitsFor, recordHotWorkStopped, transitionPermit, updateChecklist, updatePermit } from './permits.service';
import { permitDetail } from './permit-view';
import { preparePermitPdf } from './permit-pdf';
import type { Request } from 'express';
import { onReadPool } from '../../lib/read-replica';

export function createPermitsRouter(deps: AppDeps) {
  const router = Router();
  router.use('/permits', requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });

  const detail = (c: CallerContext, id: string) => permitDetail(deps, c, id);

  router.get('/permits', async (req, res) => {
    const c = caller(req);
    const q = parse(permitsQuerySchema, req.query, 'query');
    res.json(await onReadPool(deps, req, c.actor.tenantId, (d) => listPermitsFor(d, c, q)));
  });

  router.post('/permits', async (req, res) => {
    const c = caller(req);
    const created = await createPermit(deps, c, parse(createPermitInputSchema, req.body, 'permit'));
    res.status(201).json(await detail(c, created.id));
  });

  router.get('/permits/:id', async (req, res) => {
    res.json(await detail(caller(req), parse(uuidSchema, req.params.id, 'path')));
  });

  router.patch('/permits/:id', async (req, res) => {
    const c = caller(req);
    const id = parse(uuidSchema, req.params.id, 'path');
    await updatePermit(deps, c, id, parse(updatePermitInputSchema, req.body, 'permit'));
    res.json(await detail(c, id));
  });

  router.post('/permits/:id/transitions', async (req, res) => {
    const c = caller(req);
    const id = parse(uuidSchema, req.params.id, 'path');
    await transitionPermit(deps, c, id, parse(transitionInputSchema, req.body, 'action'));
    res.json(await detail(c, id));
  });

  router.post('/permits/:id/checklist', async (req, res) => {
    const c = caller(req);
    const id = parse(uuidSchema, req.params.id, 'path');
    const input = parse(checklistUpdateSchema, req.body, 'checklist');
    await updateChecklist(deps, c, id, input.list, input.key, input.confirmed);
    res.json(await detail(c, id));
  });

  router.post('/permits/:id/hot-work-stopped', async (req, res) => {
    const c = caller(req);
    const id = parse(uuidSchema, req.params.id, 'path');
    await recordHotWorkStopped(deps, c, id);
    res.json(await detail(c, id));
  });

  router.get('/permits/:id/pdf', async (req, res) => {
    const c = caller(req);
    const id = parse(uuidSchema, req.params.id, 'path');
    const data = await detail(c, id);
    const writePdf = await preparePermitPdf(deps, c.actor.tenantId, data);
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="${data.number}.pdf"`);
    res.setHeader('Cache-Control', 'no-store');
    await writePdf(res);
  });

  return router;
}
