import { createHash } from 'node:crypto';
import type { Request, RequestHandler, Response } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppDeps } from '../deps';
import { AppError } from '../errors/app-error';
import { withTenant } from '../db/sequelize';
import { canonicalJson } from '../lib/canonical-json';

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

interface StoredKey {
  request_hash: string;
  body_hash: string | null;
  status: number | null;
  body: unknown;
}

/** What the first middleware learnt about the key, for the route that reads a body after it. */
type KeyState = { claimed: true } | { claimed: false; stored: StoredKey };
const keyStates = new WeakMap<Request, KeyState>();

const sha256 = (data: string | Buffer) => createHash('sha256').update(data).digest('hex');

function replay(res: Response, stored: StoredKey) {
  if (stored.status === null) throw AppError.conflict('The first request with this Idempotency-Key is still being processed. Try again in a moment.');
  res.setHeader('Idempotent-Replayed', 'true');
  if (stored.status === 204) return void res.status(204).end();
  res.status(stored.status).json(stored.body);
}

const differentRequest = () => AppError.unprocessable('This Idempotency-Key was already used for a different request.');

/**
 * `Idempotency-Key` on a state-changing request: the first response is stored and replayed for a
 * retry with the same key, so a tap repeated on a flaky site connection never applies a step twice.
 * The same key with a different request is refused.
 *
 * The hash covers the method, the URL and the JSON body. A route that reads another body itself (a
 * multipart upload, a CSV) adds `idempotentBody` after reading it, so the file counts too.
 */
export function idempotency(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const key = req.get('idempotency-key');
    if (!key || !STATE_CHANGING.has(req.method) || !req.actor) return next();
    if (key.length > 100 || !/^[\x21-\x7e]+$/.test(key)) return next(AppError.validation('The Idempotency-Key header must be 1–100 visible ASCII characters.', [{ path: 'Idempotency-Key', message: 'Not valid.' }]));
    const { tenantId, userId } = req.actor;
    const requestHash = sha256(`${req.method} ${req.originalUrl}\n${canonicalJson(req.body ?? null)}`);
    const existing = await withTenant(deps.sequelize, tenantId, async () => {
      const inserted = await deps.sequelize.query(
        `INSERT INTO idempotency_keys (tenant_id, user_id, key, request_hash) VALUES (:tenantId, :userId, :key, :requestHash) ON CONFLICT DO NOTHING RETURNING key`,
        { replacements: { tenantId, userId, key, requestHash }, type: QueryTypes.SELECT },
      );
      if (inserted.length) return null;
      const [row] = await deps.sequelize.query<StoredKey>(`SELECT request_hash, body_hash, status, body FROM idempotency_keys WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`, {
        replacements: { tenantId, userId, key },
        type: QueryTypes.SELECT,
      });
      return row;
    });
    if (existing) {
      if (existing.request_hash !== requestHash) return next(differentRequest());
      // The first request's route read a body of its own: only that route can compare this one's.
      if (existing.body_hash !== null) {
        keyStates.set(req, { claimed: false, stored: existing });
        return next();
      }
      return replay(res, existing);
    }
    keyStates.set(req, { claimed: true });
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

/**
 * After a route has read a body the JSON parser does not (multer's fields and file, a text/csv body):
 * binds the key to that body as well. The first request records the body's hash; a retry with the
 * same body is answered with the first response, one with another file or text is refused.
 */
export function idempotentBody(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const state = keyStates.get(req);
    if (!state || !req.actor) return next();
    const file = req.file ? { name: req.file.originalname, size: req.file.size, sha256: sha256(req.file.buffer) } : null;
    const bodyHash = sha256(canonicalJson({ body: typeof req.body === 'string' ? { text: sha256(req.body) } : (req.body ?? null), file }));
    if (!state.claimed) {
      if (state.stored.body_hash !== bodyHash) throw differentRequest();
      return replay(res, state.stored);
    }
    const { tenantId, userId } = req.actor;
    await withTenant(deps.sequelize, tenantId, () =>
      deps.sequelize.query(`UPDATE idempotency_keys SET body_hash = :bodyHash WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`, {
        replacements: { tenantId, userId, key: req.get('idempotency-key'), bodyHash },
      }),
    );
    next();
  };
}
