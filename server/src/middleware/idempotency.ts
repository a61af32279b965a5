import { createHash } from 'node:crypto';
import type { RequestHandler } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppDeps } from '../deps';
import { AppError } from '../errors/app-error';
import { withTenant } from '../db/sequelize';
import { canonicalJson } from '../modules/audit/canonical-json';

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

/**
 * `Idempotency-Key` on a state-changing request: the first response is stored and replayed for a
 * retry with the same key, so a tap repeated on a flaky site connection never applies a step twice.
 * The same key with a different request is refused.
 */
export function idempotency(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const key = req.get('idempotency-key');
    if (!key || !STATE_CHANGING.has(req.method) || !req.actor) return next();
    if (key.length > 100 || !/^[\x21-\x7e]+$/.test(key)) return next(AppError.validation('The Idempotency-Key header must be 1–100 visible ASCII characters.', [{ path: 'Idempotency-Key', message: 'Not valid.' }]));
    const { tenantId, userId } = req.actor;
    const requestHash = createHash('sha256').update(`${req.method} ${req.originalUrl}\n${canonicalJson(req.body ?? null)}`).digest('hex');
    const claimed = await withTenant(deps.sequelize, tenantId, async () => {
      const inserted = await deps.sequelize.query(
        `INSERT INTO idempotency_keys (tenant_id, user_id, key, request_hash) VALUES (:tenantId, :userId, :key, :requestHash) ON CONFLICT DO NOTHING RETURNING key`,
        { replacements: { tenantId, userId, key, requestHash }, type: QueryTypes.SELECT },
      );
      if (inserted.length) return null;
      const [row] = await deps.sequelize.query<{ request_hash: string; status: number | null; body: unknown }>(
        `SELECT request_hash, status, body FROM idempotency_keys WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`,
        { replacements: { tenantId, userId, key }, type: QueryTypes.SELECT },
      );
      return row;
    });
    if (claimed) {
      if (claimed.request_hash !== requestHash) return next(AppError.unprocessable('This Idempotency-Key was already used for a different request.'));
      if (claimed.status === null) return next(AppError.conflict('The first request with this Idempotency-Key is still being processed. Try again in a moment.'));
      res.setHeader('Idempotent-Replayed', 'true');
      if (claimed.status === 204) return res.status(204).end();
      return res.status(claimed.status).json(claimed.body);
    }
    const json = res.json.bind(res);
    let stored = false;
    const store = (status: number, body: unknown) => {
      if (stored) return;
      stored = true;
      // A server error is not a result: forget the key so the retry runs again.
      const sql =
        status >= 500
          ? `DELETE FROM idempotency_keys WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`
          : `UPDATE idempotency_keys SET status = :status, body = CAST(:body AS jsonb) WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`;
      void withTenant(deps.sequelize, tenantId, () => deps.sequelize.query(sql, { replacements: { tenantId, userId, key, status, body: JSON.stringify(body ?? null) } })).catch((err) =>
        req.log?.warn({ err: (err as Error).message }, 'could not store the idempotent response'),
      );
    };
    res.json = (body: unknown) => {
      store(res.statusCode, body);
      return json(body);
    };
    res.on('finish', () => store(res.statusCode, null));
    next();
  };
}
