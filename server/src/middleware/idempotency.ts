import { createHash } from 'node:crypto';
import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { QueryTypes } from 'sequelize';
import type { AppDeps } from '../deps';
import { AppError } from '../errors/app-error';
import { withRequestTransaction } from '../db/sequelize';
import { canonicalJson } from '../lib/canonical-json';

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);
/** The advisory-lock class of keys in flight (two-number locks, apart from the one-number locks used elsewhere). */
const KEY_LOCK_CLASS = 0x49444d50;
/**
 * A key is stored only with its answer, so a stored key without one comes from the earlier design, which
 * stored the answer after the write, left by a process that died in between; past this age it never gets one.
 */
const STRANDED_AFTER_MS = 60_000;

interface StoredKey {
  request_hash: string;
  body_hash: string | null;
  status: number | null;
  body: unknown;
  created_at: Date;
}

interface Claim {
  key: string;
  requestHash: string;
  /** The hash of a body the route read itself (a file, CSV text); null for a JSON body. */
  bodyHash: string | null;
}

/** The route's answer, held until the transaction that carries it has committed. */
interface HeldAnswer {
  status: number;
  body: unknown;
  send: () => void;
}

/** Requests whose route reads its own body: the key is claimed once it has (idempotentBody). */
const deferred = new WeakMap<Request, Omit<Claim, 'bodyHash'>>();

const sha256 = (data: string | Buffer) => createHash('sha256').update(data).digest('hex');

const stillRunning = () => AppError.conflict('The first request with this Idempotency-Key is still being processed. Try again in a moment.');
const differentRequest = () => AppError.unprocessable('This Idempotency-Key was already used for a different request.');
const stranded = () =>
  AppError.conflict('An earlier try of this request was cut off and Holdpoint cannot tell whether it was saved. Check the permit, then enter it again if it is missing.');

/** Thrown inside the request transaction to roll it back when the answer is a refusal or a failure. */
class NotAResult extends Error {
  constructor(readonly answer: HeldAnswer) {
    super('the answer is not a result to keep');
  }
}

function replay(res: Response, stored: StoredKey) {
  res.setHeader('Idempotent-Replayed', 'true');
  if (stored.status === 204) return void res.status(204).end();
  res.status(stored.status!).json(stored.body);
}

/**
 * Holds the route's answer (res.json, or res.end for an answer without a body) instead of sending it;
 * `release` puts the real senders back.
 */
function holdAnswer(res: Response) {
  const json = res.json;
  const end = res.end;
  const release = () => {
    res.json = json;
    res.end = end;
  };
  const answer = new Promise<HeldAnswer>((resolve) => {
    let held = false;
    const hold = (body: unknown, send: () => void) => {
      if (!held) {
        held = true;
        resolve({ status: res.statusCode, body, send });
      }
      return res;
    };
    res.json = (body: unknown) => hold(body, () => res.json(body));
    res.end = ((...args: unknown[]) => hold(null, () => (res.end as (...a: unknown[]) => Response)(...args))) as Response['end'];
  });
  return { answer, release };
}

/**
 * The request runs in one transaction that also stores its answer under the key, so the write and the
 * key's answer are committed together or not at all: a process that dies after its commit leaves the
 * answer for the retry to replay, and one that dies before leaves neither.
 *
 * While it runs, its transaction holds an advisory lock on the key: a retry that finds it held answers
 * 409 "still being processed" at once. The lock ends with the transaction, so when the owner's process
 * dies PostgreSQL frees the key as soon as the connection drops; an owner that freezes or loses its
 * machine is ended by `idle_in_transaction_session_timeout` (the lease, IDEMPOTENCY_LEASE_SECONDS), and
 * its late commit then fails. Either way the retry either finds the committed answer or runs the write
 * once. The stored row is read only after the lock is held, so an answer committed just before is seen.
 */
async function runUnderKey(deps: AppDeps, req: Request, res: Response, next: NextFunction, claim: Claim): Promise<void> {
  const { tenantId, userId } = req.actor!;
  const where = { tenantId, userId, key: claim.key };
  const { answer, release } = holdAnswer(res);
  let started = false;
  try {
    const outcome = await withRequestTransaction(deps.sequelize, tenantId, async (): Promise<{ stored: StoredKey } | { ran: HeldAnswer }> => {
      const [{ owner }] = await deps.sequelize.query<{ owner: boolean }>(
        `SELECT pg_try_advisory_xact_lock(:lockClass, hashtext(:lockKey)) AS owner, set_config('idle_in_transaction_session_timeout', :lease, true) AS lease`,
        { replacements: { lockClass: KEY_LOCK_CLASS, lockKey: `${tenantId}/${userId}/${claim.key}`, lease: `${deps.config.IDEMPOTENCY_LEASE_SECONDS}s` }, type: QueryTypes.SELECT },
      );
      if (!owner) throw stillRunning();
      const [row] = await deps.sequelize.query<StoredKey>(
        `SELECT request_hash, body_hash, status, body, created_at FROM idempotency_keys WHERE tenant_id = :tenantId AND user_id = :userId AND key = :key`,
        { replacements: where, type: QueryTypes.SELECT },
      );
      if (row) return { stored: row };
      started = true;
      next();
      const held = await answer;
      // A refusal or a server error is not a result: everything the request did is rolled back with it
      // (counted wrong passwords live outside this transaction) and the key stays free, so a retry is
      // judged again on the records as they are then.
      if (held.status >= 400) throw new NotAResult(held);
      await deps.sequelize.query(
        `INSERT INTO idempotency_keys (tenant_id, user_id, key, request_hash, body_hash, status, body)
         VALUES (:tenantId, :userId, :key, :requestHash, :bodyHash, :status, CAST(:body AS json))`,
        { replacements: { ...where, requestHash: claim.requestHash, bodyHash: claim.bodyHash, status: held.status, body: JSON.stringify(held.body ?? null) } },
      );
      return { ran: held };
    });
    release();
    if ('ran' in outcome) {
      res.status(outcome.ran.status);
      return outcome.ran.send();
    }
    const { stored } = outcome;
    if (stored.request_hash !== claim.requestHash || stored.body_hash !== claim.bodyHash) return next(differentRequest());
    if (stored.status === null) return next(Date.now() - new Date(stored.created_at).getTime() > STRANDED_AFTER_MS ? stranded() : stillRunning());
    return replay(res, stored);
  } catch (err) {
    release();
    if (!started) return next(err);
    if (err instanceof NotAResult) {
      res.status(err.answer.status);
      return err.answer.send();
    }
    // The answer was decided but could not be committed with its key (the database went away, the lease
    // ran out): whether it was kept is for the retry to find out, which is safe.
    req.log?.warn({ err: (err as Error).message }, 'could not commit an idempotent request');
    if (res.headersSent) return;
    const unavailable = new AppError('service_unavailable', 'Holdpoint could not finish saving this. Send it again in a moment.');
    res.status(unavailable.status).json({ error: { code: unavailable.code, message: unavailable.message, details: unavailable.details } });
  }
}

/**
 * `Idempotency-Key` on a state-changing request: the first answer is stored and replayed for a retry with
 * the same key, so a tap repeated on a flaky site connection, or a record the phone's outbox sends again,
 * never applies a step twice. The same key with a different request is refused (422); a retry while the
 * first is still running gets 409 "still being processed".
 *
 * The hash covers the method, the URL and the JSON body. A route that reads another body itself (a
 * multipart upload, a CSV) adds `idempotentBody` after reading it, so the file counts too; its key is
 * claimed only then, so no database connection waits for a slow upload (a multipart or text request to a
 * route without it is not covered by its key).
 */
export function idempotency(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const key = req.get('idempotency-key');
    if (!key || !STATE_CHANGING.has(req.method) || !req.actor) return next();
    if (key.length > 100 || !/^[\x21-\x7e]+$/.test(key)) return next(AppError.validation('The Idempotency-Key header must be 1–100 visible ASCII characters.', [{ path: 'Idempotency-Key', message: 'Not valid.' }]));
    const requestHash = sha256(`${req.method} ${req.originalUrl}\n${canonicalJson(req.body ?? null)}`);
    if (req.is(['multipart/*', 'text/*'])) {
      deferred.set(req, { key, requestHash });
      return next();
    }
    return runUnderKey(deps, req, res, next, { key, requestHash, bodyHash: null });
  };
}

/**
 * After a route has read a body the JSON parser does not (multer's fields and file, a text/csv body):
 * claims the key with that body's hash as well. A retry with the same body is answered with the first
 * answer, one with another file or text is refused.
 */
export function idempotentBody(deps: AppDeps): RequestHandler {
  return async (req, res, next) => {
    const claim = deferred.get(req);
    if (!claim || !req.actor) return next();
    deferred.delete(req);
    const file = req.file ? { name: req.file.originalname, size: req.file.size, sha256: sha256(req.file.buffer) } : null;
    const bodyHash = sha256(canonicalJson({ body: typeof req.body === 'string' ? { text: sha256(req.body) } : (req.body ?? null), file }));
    return runUnderKey(deps, req, res, next, { ...claim, bodyHash });
  };
}
