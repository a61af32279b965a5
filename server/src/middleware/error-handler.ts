import type { ErrorRequestHandler, RequestHandler } from 'express';
import { ForbiddenError } from '@casl/ability';
import { ZodError } from 'zod';
import { BaseError, ConnectionAcquireTimeoutError, ConnectionError, ConnectionRefusedError, ConnectionTimedOutError, HostNotReachableError, UniqueConstraintError, ForeignKeyConstraintError } from 'sequelize';
import { AppError } from '../errors/app-error';
import { zodDetails } from './validate';
import { CalcInputError } from '@shared/calc';

function isDatabaseDown(err: unknown): boolean {
  if (err instanceof ConnectionError || err instanceof ConnectionRefusedError || err instanceof ConnectionTimedOutError || err instanceof HostNotReachableError) return true;
  const e = err as { code?: string; original?: { code?: string }; parent?: { code?: string }; message?: string };
  const code = e?.original?.code ?? e?.parent?.code ?? e?.code;
  if (code && ['ECONNREFUSED', 'ECONNRESET', '57P01', '57P02', '57P03', '08006', '08003', '08001'].includes(code)) return true;
  // "not queryable": the next query of a transaction whose connection died when PostgreSQL stopped (pg gives it no code).
  return /Connection terminated|connection to server|ECONNREFUSED|Operation timeout|ResourceRequest timed out|is not queryable|timeout exceeded when trying to connect/i.test(
    e?.message ?? '',
  );
}

/** Seconds a client is asked to wait before trying again when the server is too busy to answer. */
export const BUSY_RETRY_AFTER_SECONDS = 5;

/**
 * Too busy rather than broken: a statement cancelled by its timeout (57014 query_canceled), a lock not
 * granted in time (55P03), PostgreSQL out of connections (53300), or no pooled connection free within
 * the pool's wait. The transaction was rolled back; the same request later can succeed.
 */
function isOverloaded(err: unknown): boolean {
  if (err instanceof ConnectionAcquireTimeoutError) return true;
  const e = err as { code?: string; original?: { code?: string }; parent?: { code?: string }; message?: string; name?: string };
  const code = e?.original?.code ?? e?.parent?.code ?? e?.code;
  if (code && ['57014', '55P03', '53300'].includes(code)) return true;
  return /ResourceRequest timed out|Operation timeout/i.test(e?.message ?? '');
}

/** Maps every error to the one JSON shape; never leaks stacks or SQL. */
export function errorHandler(): ErrorRequestHandler {
  return (err, req, res, next) => {
    // An error after the answer went out (a late session save under load) can only be logged.
    if (res.headersSent) {
      req.log?.warn({ err: (err as Error)?.message }, 'error after the response was sent');
      return next(err);
    }
    let appErr: AppError;
    const status = (err as { status?: number; statusCode?: number }).status ?? (err as { statusCode?: number }).statusCode;
    const type = (err as { type?: string }).type;
    if (err instanceof AppError) appErr = err;
    else if (err instanceof ZodError) appErr = AppError.validation('Some fields are missing or not valid.', zodDetails(err));
    else if (err instanceof CalcInputError) appErr = AppError.validation(err.message, [{ path: err.field, message: err.message }]);
    else if (err instanceof ForbiddenError) appErr = AppError.forbidden(err.message || 'Your role does not allow this action.');
    else if (type === 'entity.too.large' || status === 413 || (err as { code?: string }).code === 'LIMIT_FILE_SIZE')
      appErr = new AppError('payload_too_large', 'The request is too large.');
    else if (type === 'entity.parse.failed') appErr = AppError.validation('The request body is not valid JSON.');
    else if (type === 'encoding.unsupported' || type === 'charset.unsupported') appErr = new AppError('unsupported_media_type', 'That content encoding is not supported.');
    else if (err instanceof UniqueConstraintError) appErr = AppError.conflict('A record with the same key already exists.', {});
    else if (err instanceof ForeignKeyConstraintError) appErr = AppError.validation('A referenced record does not exist.');
    else if (isOverloaded(err)) {
      appErr = new AppError('service_unavailable', 'Holdpoint is very busy right now and could not finish this. Nothing was changed. Try again in a few seconds.');
      res.set('Retry-After', String(BUSY_RETRY_AFTER_SECONDS));
    } else if (isDatabaseDown(err)) appErr = new AppError('service_unavailable', 'The database is not reachable right now. Try again in a moment.');
    else if (status && status >= 400 && status < 500) appErr = new AppError(status === 404 ? 'not_found' : status === 415 ? 'unsupported_media_type' : 'validation_failed', status === 404 ? 'Not found.' : 'The request could not be processed.');
    else {
      req.log?.error({ err }, 'unhandled error');
      appErr = new AppError('internal', 'Something went wrong on our side. The error has been logged.');
    }
    if (appErr.status >= 500 && appErr.code !== 'internal') req.log?.warn({ err: (err as Error).message }, appErr.code);
    if (appErr.status === 403) req.log?.info({ event: 'authorisation_refused', path: req.path, method: req.method, user: req.session?.userId }, 'refused');
    res.status(appErr.status).json({ error: { code: appErr.code, message: appErr.message, details: appErr.details, ...appErr.extra } });
  };
}

export function notFoundApi(): RequestHandler {
  return (_req, _res, next) => next(new AppError('not_found', 'There is no such API route.'));
}

export { BaseError };
