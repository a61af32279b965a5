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
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { assetContext } from './asset-context';
import { createPipeline, findPipelineRow, getPipeline, listPipelines, updatePipeline } from './pipelines.service';
import { createPoint, findPoint, listPoints, updatePoint } from './points.service';
import { createInventory, findInventory, listInventory, updateInventory } from './inventory.service';
import { exportAssets, importAssets } from './import.service';

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

const importBodySchema = z.object({ csv: z.string({ message: 'Put the CSV text in "csv".' }).max(CSV_LIMIT_BYTES) });

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
  const { sequelize } = deps;
  router.use(['/pipelines', '/isolation-points', '/locks', '/tags', '/imports/assets', '/exports/assets.csv'], requireTenant);
  const tenantOf = (req: express.Request) => actorOf(req).actor.tenantId;
  const inTenant = <T>(req: express.Request, fn: () => Promise<T>) => withTenant(sequelize, tenantOf(req), fn);
  const idOf = (req: express.Request) => parse(uuidSchema, req.params.id, 'path');

  router.get('/pipelines', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Pipeline', { tenantId: actor.tenantId }, 'pipelines');
    const q = parse(pipelinesQuerySchema, req.query, 'query');
    res.json(await inTenant(req, () => listPipelines(sequelize, actor.tenantId, q)));
  });

  router.post('/pipelines', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'create', 'Pipeline', { tenantId: actor.tenantId }, 'pipelines');
    const input = parse(pipelineInputSchema, req.body, 'pipeline');
    res.status(201).json(await inTenant(req, () => createPipeline(assetContext(deps, req), input)));
  });

  router.get('/pipelines/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const id = idOf(req);
    res.json(authorizeRecord(ability, 'read', 'Pipeline', await inTenant(req, () => getPipeline(sequelize, actor.tenantId, id)), 'pipeline'));
  });

  router.patch('/pipelines/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const id = idOf(req);
    const result = await inTenant(req, async () => {
      authorizeRecord(ability, 'update', 'Pipeline', await findPipelineRow(sequelize, actor.tenantId, id), 'pipeline');
      const patch = parse(pipelinePatchSchema, req.body, 'pipeline');
      return updatePipeline(assetContext(deps, req), id, patch);
    });
    res.json(result);
  });

  router.get('/isolation-points', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'IsolationPoint', { tenantId: actor.tenantId }, 'isolation points');
    const q = parse(pointsQuerySchema, req.query, 'query');
    res.json(await inTenant(req, () => listPoints(sequelize, actor.tenantId, q)));
  });

  router.post('/isolation-points', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'create', 'IsolationPoint', { tenantId: actor.tenantId }, 'isolation points');
    const input = parse(pointInputSchema, req.body, 'isolation point');
    res.status(201).json(await inTenant(req, () => createPoint(assetContext(deps, req), input)));
  });

  router.get('/isolation-points/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const id = idOf(req);
    res.json(authorizeRecord(ability, 'read', 'IsolationPoint', await inTenant(req, () => findPoint(sequelize, actor.tenantId, id)), 'isolation point'));
  });

  router.patch('/isolation-points/:id', async (req, res) => {
    const { actor, ability } = actorOf(req);
    const id = idOf(req);
    const result = await inTenant(req, async () => {
      const current = authorizeRecord(ability, 'update', 'IsolationPoint', await findPoint(sequelize, actor.tenantId, id, true), 'isolation point');
      const patch = parse(pointPatchSchema, req.body, 'isolation point');
      return updatePoint(assetContext(deps, req), current, patch);
    });
    res.json(result);
  });

  const inventory = (kind: InventoryKind, path: string, subjectName: 'Lock' | 'Tag', what: string) => {
    router.get(path, async (req, res) => {
      const { actor, ability } = actorOf(req);
      authorizeType(ability, 'read', subjectName, { tenantId: actor.tenantId }, `${what}s`);
      const q = parse(inventoryQuerySchema, req.query, 'query');
      res.json(await inTenant(req, () => listInventory(sequelize, kind, actor.tenantId, q)));
    });
    router.post(path, async (req, res) => {
      const { actor, ability } = actorOf(req);
      authorizeType(ability, 'create', subjectName, { tenantId: actor.tenantId }, `${what}s`);
      const input = parse(inventoryInputSchema, req.body, what);
      res.status(201).json(await inTenant(req, () => createInventory(assetContext(deps, req), kind, input)));
    });
    router.get(`${path}/:id`, async (req, res) => {
      const { actor, ability } = actorOf(req);
      const id = idOf(req);
      res.json(authorizeRecord(ability, 'read', subjectName, await inTenant(req, () => findInventory(sequelize, kind, actor.tenantId, id)), what));
    });
    router.patch(`${path}/:id`, async (req, res) => {
      const { actor, ability } = actorOf(req);
      const id = idOf(req);
      const result = await inTenant(req, async () => {
        authorizeRecord(ability, 'update', subjectName, await findInventory(sequelize, kind, actor.tenantId, id), what);
        const patch = parse(inventoryPatchSchema, req.body, what);
        return updateInventory(assetContext(deps, req), kind, id, patch);
      });
      res.json(result);
    });
  };
  inventory('lock', '/locks', 'Lock', 'lock');
  inventory('tag', '/tags', 'Tag', 'tag');

  router.post('/imports/assets', csvText, csvUpload, async (req, res) => {
    const { actor, ability } = actorOf(req);
    // An import both adds and changes records.
    for (const action of ['create', 'update'] as const) {
      authorizeType(ability, action, 'Pipeline', { tenantId: actor.tenantId }, 'pipelines');
      authorizeType(ability, action, 'IsolationPoint', { tenantId: actor.tenantId }, 'isolation points');
    }
    const { dryRun } = parse(importQuerySchema, req.query, 'query');
    const csv = csvFromRequest(req);
    res.json(await inTenant(req, () => importAssets(assetContext(deps, req), csv, dryRun === 'true' || dryRun === '1')));
  });

  router.get('/exports/assets.csv', async (req, res) => {
    const { actor, ability } = actorOf(req);
    authorizeType(ability, 'read', 'Pipeline', { tenantId: actor.tenantId }, 'pipelines');
    authorizeType(ability, 'read', 'IsolationPoint', { tenantId: actor.tenantId }, 'isolation points');
    const { pipelineId } = parse(z.object({ pipelineId: uuidSchema.optional() }), req.query, 'query');
    const csv = await inTenant(req, () => exportAssets(sequelize, actor.tenantId, pipelineId));
    const day = deps.clock.now().toISOString().slice(0, 10);
    res.type('text/csv; charset=utf-8').attachment(`holdpoint-assets-${day}.csv`).send(csv);
  });

  return router;
}
