// Audit trail.
//   GET  /api/audit/verify              tenant admin, authoriser, auditor: recompute the tenant's hash chain at once; lists every break found
//   GET  /api/audit/events              tenant admin, authoriser, auditor: the tenant's events, newest first, filtered, paged, in words
//   GET  /api/audit/actors              tenant admin, authoriser, auditor: the people the "who" filter offers
//   GET  /api/audit/export              tenant admin, authoriser, auditor: the filtered events as CSV or JSON Lines, streamed, oldest first
//   POST /api/audit/chain-checks        tenant admin, authoriser, auditor: start a chain check in the background (or join the one running)
//   GET  /api/audit/chain-checks/latest tenant admin, authoriser, auditor: the latest chain check, its progress and result (null: none yet)
//   GET  /api/audit/checkpoints         tenant admin, authoriser, auditor: the signed checkpoints, newest first
//   POST /api/audit/checkpoints         tenant admin, authoriser, auditor: sign the chain head now
//   GET  /api/audit/public-key          anyone: the Ed25519 public key that checks the checkpoints
import { Router } from 'express';
import { auditActionInputSchema, auditEventsQuerySchema, auditExportQuerySchema } from '@shared/schemas/audit.schema';
import type { AppDeps } from '../../deps';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { requireAbility } from '../../middleware/require-ability';
import { verifyTenantChain } from './audit.service';
import { listAuditActors, listAuditLog, prepareAuditExport } from './audit-log';
import { getChainCheck, startChainCheck } from './chain-checks';
import { auditPublicKey, listCheckpoints, requestCheckpoint } from './checkpoints';
import { onReadPool } from '../../lib/read-replica';

export function createAuditRouter(deps: AppDeps) {
  const router = Router();
  // Public on purpose: whoever holds a checkpoint must be able to check it without an account.
  router.get('/audit/public-key', (_req, res) => {
    res.json(auditPublicKey(deps));
  });
  router.use('/audit', requireTenant);

  router.get('/audit/verify', async (req, res) => {
    res.json(await verifyTenantChain(deps, actorOf(req)));
  });

  router.get('/audit/events', requireAbility('read', 'AuditEvent', 'the audit trail'), async (req, res) => {
    const caller = actorOf(req);
    const q = parse(auditEventsQuerySchema, req.query, 'query');
    res.json(await onReadPool(deps, req, caller.actor.tenantId, (d) => listAuditLog(d, caller, q)));
  });

  router.get('/audit/actors', async (req, res) => {
    res.json(await listAuditActors(deps, actorOf(req)));
  });

  router.get('/audit/export', requireAbility('read', 'AuditEvent', 'the audit trail'), async (req, res) => {
    const q = parse(auditExportQuerySchema, req.query, 'query');
    const out = prepareAuditExport(deps, actorOf(req), q);
    res.setHeader('Content-Type', out.contentType);
    res.setHeader('Content-Disposition', `attachment; filename="${out.filename}"`);
    res.setHeader('Cache-Control', 'no-store');
    try {
      await out.write(res);
      res.end();
    } catch (err) {
      // The headers are gone: the reader can only be told by a cut-off answer.
      res.destroy(err as Error);
    }
  });

  router.post('/audit/chain-checks', requireAbility('verify_chain', 'AuditEvent', 'the audit trail'), async (req, res) => {
    parse(auditActionInputSchema, req.body ?? {}, 'chain check');
    res.status(202).json(await startChainCheck(deps, actorOf(req)));
  });

  router.get('/audit/chain-checks/latest', async (req, res) => {
    res.json(await getChainCheck(deps, actorOf(req)));
  });

  router.get('/audit/checkpoints', async (req, res) => {
    res.json(await listCheckpoints(deps, actorOf(req)));
  });

  router.post('/audit/checkpoints', requireAbility('verify_chain', 'AuditEvent', 'the audit trail'), async (req, res) => {
    parse(auditActionInputSchema, req.body ?? {}, 'checkpoint');
    res.status(201).json(await requestCheckpoint(deps, actorOf(req)));
  });
  return router;
}
