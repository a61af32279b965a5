// Engineering calculations for the crew; every signed-in member of a tenant (read Calculator).
//   GET  /api/calc/mud-plug?diameterIn=&waterFraction=   mudPlug result, plus caution and basis
//   GET  /api/calc/pipe?nps=&schedule=                   pipeDimensions result (ASME B36.10M)
//   GET  /api/calc/pipe-sizes                            sizes listed for each schedule (fixed table, not paged)
//   GET  /api/calc/line-fill?idIn=&lengthFt=             lineFill result
//   POST /api/calc/atmosphere { readings, hotWork? }     assessAtmosphere result against the tenant's limits
// Not signed in → 401; signed in without a role in the active tenant → 403.
import { Router, type Request } from 'express';
import type { ZodType } from 'zod';
import { atmosphereRequestSchema, lineFillQuerySchema, mudPlugQuerySchema, pipeQuerySchema } from '@shared/schemas/calc.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { zodDetails } from '../../middleware/validate';
import { authorizeType } from '../../lib/authorize';
import { AppError } from '../../errors/app-error';
import * as calc from './calc.service';

/** Like parse(), but a single bad field leads with its own message, as a CalcInputError does. */
function parseInput<T>(schema: ZodType<T>, value: unknown, what: string): T {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const details = zodDetails(result.error);
  const message = details.length === 1 ? details[0].message : `Some fields of the ${what} are missing or not valid.`;
  throw AppError.validation(message, details);
}

function allowed(req: Request) {
  const { actor, ability } = actorOf(req);
  authorizeType(ability, 'read', 'Calculator', { tenantId: actor.tenantId }, 'the calculator');
  return actor;
}

export function createCalcRouter(deps: AppDeps) {
  const router = Router();
  const { sequelize } = deps;
  router.use('/calc', requireTenant);

  router.get('/calc/mud-plug', (req, res) => {
    allowed(req);
    res.json(calc.mudPlugFor(parseInput(mudPlugQuerySchema, req.query, 'query')));
  });

  router.get('/calc/pipe', (req, res) => {
    allowed(req);
    res.json(calc.pipeFor(parseInput(pipeQuerySchema, req.query, 'query')));
  });

  router.get('/calc/pipe-sizes', (req, res) => {
    allowed(req);
    res.json(calc.pipeSizes());
  });

  router.get('/calc/line-fill', (req, res) => {
    allowed(req);
    res.json(calc.lineFillFor(parseInput(lineFillQuerySchema, req.query, 'query')));
  });

  router.post('/calc/atmosphere', async (req, res) => {
    const actor = allowed(req);
    const input = parseInput(atmosphereRequestSchema, req.body, 'gas readings');
    const { assessment, ignored } = await calc.assessForTenant(sequelize, actor.tenantId, input);
    if (ignored.length) req.log.warn({ event: 'tenant_limits_ignored', tenantId: actor.tenantId, ignored }, 'stored atmosphere limits left out');
    res.json(assessment);
  });

  return router;
}
