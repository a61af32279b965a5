// Gas tests, gas monitors, timed checks and shift handovers.
//   GET   /api/instruments                                 every tenant member
//   POST  /api/instruments                                 tenant admin, authoriser
//   PATCH /api/instruments/:id                             tenant admin, authoriser (bump test, calibration, retire)
//   GET   /api/permits/:id/gas-tests                       readers of the permit (paged; ?dir=asc for a chart)
//   POST  /api/permits/:id/gas-tests                       gas tester of the permit's contractor, with an in-date gas tester qualification
//   POST  /api/permits/:id/gas-tests/import                the same: a monitor's CSV log (text/csv, or JSON { csv }); ?dryRun / dryRun previews
//   GET   /api/permits/:id/regime                          readers of the permit: limits, tests done, due times
//   PUT   /api/permits/:id/gas-limits                      who may update the permit (contractor lead, authoriser): tighten its limits
//   GET   /api/permits/:id/checks                          readers of the permit
//   POST  /api/permits/:id/checks                          isolation technician, gas tester, contractor lead of the permit's contractor
//   GET   /api/permits/:id/handovers                       readers of the permit
//   POST  /api/permits/:id/handovers                       the contractor lead holding the permit (signed)
//   POST  /api/permits/:id/handovers/:handoverId/accept    the incoming contractor lead named on it (signed)
import express, { Router, type Request } from 'express';
import { pageQuerySchema, uuidSchema } from '@shared/schemas/common.schema';
import {
  gasImportInputSchema,
  gasImportQuerySchema,
  gasTestInputSchema,
  gasTestsQuerySchema,
  instrumentInputSchema,
  instrumentPatchSchema,
  instrumentsQuerySchema,
  permitGasLimitsSchema,
} from '@shared/schemas/gas-tests.schema';
import { checkInputSchema, checksQuerySchema, handoverAcceptSchema, handoverCreateSchema } from '@shared/schemas/timed-checks.schema';
import { readingColumns } from '@shared/gas-tests/csv-readings';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { idempotentBody } from '../../middleware/idempotency';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { createInstrument, listInstruments, updateInstrument } from './instruments.service';
import { listGasTestsFor, recordGasTest, setPermitLimits } from './gas-tests.service';
import { importGasLog } from './gas-tests.import';
import { regimeFor } from './regime.service';
import { listChecks, recordCheck } from './checks.service';
import { acceptHandover, createHandover, listHandovers } from './handovers.service';

export function createGasTestsRouter(deps: AppDeps) {
  const router = Router();
  router.use(['/instruments', '/permits'], requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });
  const permitId = (req: Request) => parse(uuidSchema, req.params.id, 'path');

  router.get('/instruments', async (req, res) => {
    res.json(await listInstruments(deps, caller(req), parse(instrumentsQuerySchema, req.query, 'query')));
  });
  router.post('/instruments', async (req, res) => {
    res.status(201).json(await createInstrument(deps, caller(req), parse(instrumentInputSchema, req.body, 'instrument')));
  });
  router.patch('/instruments/:id', async (req, res) => {
    res.json(await updateInstrument(deps, caller(req), parse(uuidSchema, req.params.id, 'path'), parse(instrumentPatchSchema, req.body, 'instrument')));
  });

  router.get('/permits/:id/gas-tests', async (req, res) => {
    res.json(await listGasTestsFor(deps, caller(req), permitId(req), parse(gasTestsQuerySchema, req.query, 'query')));
  });
  router.post('/permits/:id/gas-tests', async (req, res) => {
    res.status(201).json(await recordGasTest(deps, caller(req), permitId(req), parse(gasTestInputSchema, req.body, 'gas test')));
  });
  // A CSV body up to 1 MB; a JSON body goes through the app's JSON parser (100 kB).
  router.post('/permits/:id/gas-tests/import', express.text({ type: ['text/csv', 'text/plain'], limit: '1mb' }), idempotentBody(deps), async (req, res) => {
    const c = caller(req);
    const id = permitId(req);
    let body: unknown = req.body;
    if (typeof req.body === 'string') {
      const q = parse(gasImportQuerySchema, req.query, 'query') as Record<string, string | undefined>;
      const mapping = Object.fromEntries(readingColumns.filter((col) => q[col]).map((col) => [col, q[col]]));
      body = { csv: req.body, instrumentId: q.instrumentId, place: q.place, placeNote: q.placeNote, dryRun: q.dryRun ?? false, ...(Object.keys(mapping).length ? { mapping } : {}) };
    }
    const input = parse(gasImportInputSchema, body, 'import');
    const result = await importGasLog(deps, c, id, { ...input, mapping: input.mapping });
    res.status(input.dryRun ? 200 : 201).json(result);
  });
  router.get('/permits/:id/regime', async (req, res) => {
    res.json(await regimeFor(deps, caller(req), permitId(req)));
  });
  router.put('/permits/:id/gas-limits', async (req, res) => {
    res.json(await setPermitLimits(deps, caller(req), permitId(req), parse(permitGasLimitsSchema, req.body, 'limits')));
  });

  router.get('/permits/:id/checks', async (req, res) => {
    res.json(await listChecks(deps, caller(req), permitId(req), parse(checksQuerySchema, req.query, 'query')));
  });
  router.post('/permits/:id/checks', async (req, res) => {
    res.status(201).json(await recordCheck(deps, caller(req), permitId(req), parse(checkInputSchema, req.body, 'check')));
  });

  router.get('/permits/:id/handovers', async (req, res) => {
    res.json(await listHandovers(deps, caller(req), permitId(req), parse(pageQuerySchema, req.query, 'query')));
  });
  router.post('/permits/:id/handovers', async (req, res) => {
    res.status(201).json(await createHandover(deps, caller(req), permitId(req), parse(handoverCreateSchema, req.body, 'handover')));
  });
  router.post('/permits/:id/handovers/:handoverId/accept', async (req, res) => {
    const handoverId = parse(uuidSchema, req.params.handoverId, 'path');
    res.json(await acceptHandover(deps, caller(req), permitId(req), handoverId, parse(handoverAcceptSchema, req.body, 'handover')));
  });

  return router;
}
