// The asset register: pipelines, isolation points, the lock and tag stock, and its CSV.
// Everyone with a role in the tenant reads; tenant admins and authorisers write (shared/abilities).
//   GET    /api/pipelines                 read Pipeline        ?q&product&page&pageSize
//   POST   /api/pipelines                 create Pipeline
//   GET    /api/pipelines/:id             read Pipeline        with sites, points by position and derived segments
//   PATCH  /api/pipelines/:id             update Pipeline      (sites, when given, replace the list)
//   GET    /api/isolation-points          read IsolationPoint  ?pipelineId&kind&q&page&pageSize
//   POST   /api/isolation-points          create IsolationPoint
//   GET    /api/isolation-points/:id      read IsolationPoint
//   PATCH  /api/isolation-points/:id      update IsolationPoint
//   GET    /api/locks | /api/tags         read Lock | Tag      ?state&holderUserId&q&page&pageSize
//   POST   /api/locks | /api/tags         create Lock | Tag
//   GET    /api/locks/:id | /api/tags/:id read Lock | Tag
//   PATCH  /api/locks/:id | /api/tags/:id update Lock | Tag    (never to or from 'applied': that is the isolation work's)
//   POST   /api/imports/assets            create + update Pipeline and IsolationPoint   ?dryRun=true previews
//                                         body: text/csv (≤ 2 MB), multipart "file" (≤ 2 MB) or JSON { csv } (≤ 100 kB)
//   GET    /api/exports/assets.csv        read Pipeline and IsolationPoint     ?pipelineId
import express, { Router, type RequestHandler } from 'express';
import multer from 'multer';
import { z } from 'zod';
import { uuidSchema } from '@shared/schemas/common.schema';
import {
  importQuerySchema, inventoryInputSchema, inventoryPatchSchema, inventoryQuerySchema, pipelineInputSchema, pipelinePatchSchema, pipelinesQuerySchema,
  pointInputSchema, pointPatchSchema, pointsQuerySchema,
} from '@shared/schemas/assets.schema';
import type { InventoryKind } from '@shared/assets/inventory-state';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { requireAbility, requireRecordAbility } from '../../middleware/require-ability';
import { idempotentBody } from '../../middleware/idempotency';
import { assetContext } from './asset-context';
import { createPipeline, getPipeline, listPipelines, updatePipeline } from './pipelines.service';
import { createPoint, getPoint, listPoints, updatePoint } from './points.service';
import { createInventory, getInventory, listInventory, updateInventory } from './inventory.service';
import { exportRegisterCsv, importRegisterCsv } from './register-csv.service';

const CSV_LIMIT_BYTES = 2 * 1024 * 1024;
const csvText = express.text({ type: ['text/csv', 'text/plain', 'application/csv'], limit: CSV_LIMIT_BYTES });
const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: CSV_LIMIT_BYTES, files: 1, fields: 5 } }).single('file');

/** Reads a multipart upload; multer's own errors become our 400/413 instead of a 500. */
const csvUpload: RequestHandler = (req, res, next) => {
  if (!req.is('multipart/form-data')) return next();
  upload(req, res, (err: unknown) => {
    if (!err) return next();
    const code = (err as { code?: string }).code;
    if (code === 'LIMIT_FILE_SIZE') return next(new AppError('payload_too_large', 'The file is larger than 2 MB; split it into smaller files.'));
    next(AppError.validation('Send one CSV file in the form field "file".'));
  });
};

const importBodySchema = z.strictObject({ csv: z.string({ message: 'Put the CSV text in "csv".' }).max(CSV_LIMIT_BYTES) });

function csvFromRequest(req: express.Request): string {
  if (req.file) {
    try {
      return new TextDecoder('utf-8', { fatal: true }).decode(req.file.buffer);
    } catch {
      throw AppError.validation('The file is not UTF-8 text. Save it as "CSV UTF-8" and try again.', [{ path: 'file', message: 'Not UTF-8 text.' }]);
    }
  }
  if (req.is('multipart/form-data')) throw AppError.validation('The upload has no file.', [{ path: 'file', message: 'Choose a CSV file.' }]);
  if (typeof req.body === 'string') return req.body;
  if (req.is('application/json')) return parse(importBodySchema, req.body, 'import').csv;
  throw new AppError('unsupported_media_type', 'Send the CSV as text/csv, as a multipart upload in the field "file", or as JSON { "csv": "…" }.');
}

export function createAssetsRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/pipelines', '/isolation-points', '/locks', '/tags', '/imports/assets', '/exports/assets.csv'], requireTenant);
  const ctx = (req: express.Request) => assetContext(deps, req);
  const idOf = (req: express.Request) => parse(uuidSchema, req.params.id, 'path');

  router.get('/pipelines', async (req, res) => {
    res.json(await listPipelines(ctx(req), parse(pipelinesQuerySchema, req.query, 'query')));
  });

  router.post('/pipelines', requireAbility('create', 'Pipeline', 'pipelines'), async (req, res) => {
    res.status(201).json(await createPipeline(ctx(req), parse(pipelineInputSchema, req.body, 'pipeline')));
  });

  router.get('/pipelines/:id', async (req, res) => {
    res.json(await getPipeline(ctx(req), idOf(req)));
  });

  router.patch('/pipelines/:id', requireRecordAbility('update', 'Pipeline', 'pipeline', (req, id) => getPipeline(ctx(req), id)), async (req, res) => {
    const id = idOf(req);
    res.json(await updatePipeline(ctx(req), id, parse(pipelinePatchSchema, req.body, 'pipeline')));
  });

  router.get('/isolation-points', async (req, res) => {
    res.json(await listPoints(ctx(req), parse(pointsQuerySchema, req.query, 'query')));
  });

  router.post('/isolation-points', requireAbility('create', 'IsolationPoint', 'isolation points'), async (req, res) => {
    res.status(201).json(await createPoint(ctx(req), parse(pointInputSchema, req.body, 'isolation point')));
  });

  router.get('/isolation-points/:id', async (req, res) => {
    res.json(await getPoint(ctx(req), idOf(req)));
  });

  router.patch('/isolation-points/:id', requireRecordAbility('update', 'IsolationPoint', 'isolation point', (req, id) => getPoint(ctx(req), id)), async (req, res) => {
    const id = idOf(req);
    res.json(await updatePoint(ctx(req), id, parse(pointPatchSchema, req.body, 'isolation point')));
  });

  const inventory = (kind: InventoryKind, path: string) => {
    const type = kind === 'lock' ? 'Lock' : 'Tag';
    router.get(path, async (req, res) => {
      res.json(await listInventory(ctx(req), kind, parse(inventoryQuerySchema, req.query, 'query')));
    });
    router.post(path, requireAbility('create', type, `${kind}s`), async (req, res) => {
      res.status(201).json(await createInventory(ctx(req), kind, parse(inventoryInputSchema, req.body, kind)));
    });
    router.get(`${path}/:id`, async (req, res) => {
      res.json(await getInventory(ctx(req), kind, idOf(req)));
    });
    router.patch(`${path}/:id`, requireRecordAbility('update', type, kind, (req, id) => getInventory(ctx(req), kind, id)), async (req, res) => {
      const id = idOf(req);
      res.json(await updateInventory(ctx(req), kind, id, parse(inventoryPatchSchema, req.body, kind)));
    });
  };
  inventory('lock', '/locks');
  inventory('tag', '/tags');

  // The rights come before the upload is read: a caller who may not import gets 403 for any file.
  router.post('/imports/assets', requireAbility('update', 'Pipeline', 'the asset register'), requireAbility('update', 'IsolationPoint', 'the asset register'), csvText, csvUpload, idempotentBody(deps), async (req, res) => {
    const { dryRun } = parse(importQuerySchema, req.query, 'query');
    const csv = csvFromRequest(req);
    res.json(await importRegisterCsv(ctx(req), csv, dryRun === 'true' || dryRun === '1'));
  });

  router.get('/exports/assets.csv', async (req, res) => {
    const { pipelineId } = parse(z.strictObject({ pipelineId: uuidSchema.optional() }), req.query, 'query');
    const csv = await exportRegisterCsv(ctx(req), pipelineId);
    const day = deps.clock.now().toISOString().slice(0, 10);
    res.type('text/csv; charset=utf-8').attachment(`holdpoint-assets-${day}.csv`).send(csv);
  });

  return router;
}
