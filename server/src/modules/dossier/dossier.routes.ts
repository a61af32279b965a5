// The permit dossier: one PDF with the permit's whole record, its certificates, gas charts, attachments and a signed checkpoint.
//   POST /api/permits/:id/dossier              readers of that permit (auditors too), once it has left draft: starts a build, answers its progress
//   GET  /api/permits/:id/dossier/:jobId       readers of that permit: the build's progress
//   GET  /api/permits/:id/dossier/:jobId/pdf   readers of that permit: the finished PDF
import { Router, type Request } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import { startDossierInputSchema } from '@shared/schemas/dossier.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { dossierJob, dossierPdf, startDossier } from './dossier.service';

export function createDossierRouter(deps: AppDeps) {
  const router = Router();
  router.use('/permits', requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });

  router.post('/permits/:id/dossier', async (req, res) => {
    const id = parse(uuidSchema, req.params.id, 'path');
    parse(startDossierInputSchema, req.body ?? {}, 'dossier');
    const job = await startDossier(deps, caller(req), id);
    res.status(job.state === 'running' ? 202 : 201).json(job);
  });

  router.get('/permits/:id/dossier/:jobId', async (req, res) => {
    res.setHeader('Cache-Control', 'no-store');
    res.json(await dossierJob(deps, caller(req), parse(uuidSchema, req.params.id, 'path'), parse(uuidSchema, req.params.jobId, 'path')));
  });

  router.get('/permits/:id/dossier/:jobId/pdf', async (req, res) => {
    const { pdf, number } = await dossierPdf(deps, caller(req), parse(uuidSchema, req.params.id, 'path'), parse(uuidSchema, req.params.jobId, 'path'));
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="${number}-dossier.pdf"`);
    res.setHeader('Cache-Control', 'no-store');
    res.setHeader('Content-Length', String(pdf.length));
    res.end(pdf);
  });

  return router;
}
