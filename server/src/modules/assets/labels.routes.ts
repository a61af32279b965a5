// QR labels for locks and tags, and what a scanned label opens.
//   GET /api/labels                   read Lock | Tag   the tenant's stock as an A4 label sheet (PDF)   ?kind=lock|tag&state&q
//   GET /api/permits/:id/labels       readers of the permit: labels for the locks and tags on its steps (PDF)
//   GET /api/scan/lock/:code          read Lock   the lock by its number (or id), and the isolation and permit it is on now
//   GET /api/scan/tag/:code           read Tag    the same for a danger tag
// The step and permit of a scanned lock are named only to someone who may read that permit.
import { Router, type Request, type Response } from 'express';
import { uuidSchema } from '@shared/schemas/common.schema';
import { labelSheetQuerySchema, scanCodeSchema } from '@shared/schemas/labels.schema';
import { labelKinds } from '@shared/assets/label-address';
import type { AppDeps } from '../../deps';
import { requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { assetContext } from './asset-context';
import { lookUpLabel, permitLabelSheet, stockLabelSheet, type LabelSheet } from './labels.service';
import { writeLabelSheet } from './label-sheet-pdf';

export function createLabelsRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/labels', '/scan'], requireTenant);
  router.use('/permits/:id/labels', requireTenant);
  const ctx = (req: Request) => assetContext(deps, req);

  const sendSheet = async (res: Response, sheet: LabelSheet, fileName: string) => {
    res.setHeader('Content-Type', 'application/pdf');
    res.setHeader('Content-Disposition', `attachment; filename="${fileName}.pdf"`);
    res.setHeader('Cache-Control', 'no-store');
    await writeLabelSheet(sheet, deps.config.PUBLIC_URL, res);
  };

  router.get('/labels', async (req, res) => {
    const q = parse(labelSheetQuerySchema, req.query, 'query');
    await sendSheet(res, await stockLabelSheet(ctx(req), q), `${q.kind}-labels`);
  });

  router.get('/permits/:id/labels', async (req, res) => {
    const sheet = await permitLabelSheet(ctx(req), parse(uuidSchema, req.params.id, 'path'));
    await sendSheet(res, sheet, `${sheet.permitNumber}-labels`.replace(/[^A-Za-z0-9._-]/g, '-'));
  });

  for (const kind of labelKinds) {
    router.get(`/scan/${kind}/:code`, async (req, res) => {
      res.json(await lookUpLabel(ctx(req), kind, parse(scanCodeSchema, req.params.code, 'path')));
    });
  }

  return router;
}
