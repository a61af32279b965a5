// Isolation certificates and long-term isolations (HSE HSG253, HSG250).
//   GET  /api/certificates                 anyone who may read certificates (authorisers, control room, auditors, tenant admins, contractor people): paged list
//   GET  /api/certificates/:id             the same: one certificate with its isolations, permits, proving and re-checks
//   POST /api/permits/:id/certificate      whoever may edit the permit (its authoriser or contractor lead), while it is planned: rely on a live certificate
//   POST /api/certificates/:id/long-term   an authoriser: keep the isolation beyond its permits, with a reason
//   POST /api/certificates/:id/rechecks    an authoriser, or a lockout-qualified contractor lead, isolation technician or gas tester: re-check a long-term isolation
//   POST /api/certificates/:id/return      an authoriser: return a certificate no permit relies on, its isolations off
import { Router, type Request } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import { certificatesQuerySchema, linkCertificateInputSchema, markLongTermInputSchema, recordRecheckInputSchema, returnCertificateInputSchema } from '@shared/schemas/certificates.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { getCertificate, linkPermit, listCertificatesFor, markLongTerm, recordRecheck, returnCertificate } from './certificates.service';

export function createCertificatesRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/certificates', '/permits'], requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });
  const idOf = (req: Request) => parse(uuidSchema, req.params.id, 'path');

  router.get('/certificates', async (req, res) => {
    res.json(await listCertificatesFor(deps, caller(req), parse(certificatesQuerySchema, req.query, 'query')));
  });
  router.get('/certificates/:id', async (req, res) => {
    res.json(await getCertificate(deps, caller(req), idOf(req)));
  });
  router.post('/permits/:id/certificate', async (req, res) => {
    res.json(await linkPermit(deps, caller(req), idOf(req), parse(linkCertificateInputSchema, req.body, 'certificate link')));
  });
  router.post('/certificates/:id/long-term', async (req, res) => {
    res.json(await markLongTerm(deps, caller(req), idOf(req), parse(markLongTermInputSchema, req.body, 'long-term isolation')));
  });
  router.post('/certificates/:id/rechecks', async (req, res) => {
    res.status(201).json(await recordRecheck(deps, caller(req), idOf(req), parse(recordRecheckInputSchema, req.body, 're-check')));
  });
  router.post('/certificates/:id/return', async (req, res) => {
    parse(returnCertificateInputSchema, req.body ?? {}, 'return');
    res.json(await returnCertificate(deps, caller(req), idOf(req)));
  });
  return router;
}
