import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import type { RequestHandler } from 'express';
import { AppError } from '../errors/app-error';

export const CSRF_COOKIE = 'hp.csrf';
const SAFE = new Set(['GET', 'HEAD', 'OPTIONS']);

declare module 'express-session' {
  interface SessionData {
    /** The nonce of the CSRF token the person signed in with; later tokens must carry it. */
    csrfNonce: string;
  }
}

function sign(secret: string, nonce: string) {
  return createHmac('sha256', secret).update(nonce).digest('base64url');
}

export const newCsrfNonce = () => randomBytes(18).toString('base64url');

/** A signed token; a signed-in session always gets its own nonce back, so a reloaded page keeps working. */
export function issueCsrfToken(secret: string, nonce = newCsrfNonce()) {
  return `${nonce}.${sign(secret, nonce)}`;
}

export const csrfNonceOf = (token: string | undefined) => token?.split('.')[0] || undefined;

function valid(secret: string, token: string | undefined): boolean {
  if (!token) return false;
  const [nonce, mac] = token.split('.');
  if (!nonce || !mac) return false;
  const expected = Buffer.from(sign(secret, nonce));
  const given = Buffer.from(mac);
  return expected.length === given.length && timingSafeEqual(expected, given);
}

function readCookie(header: string | undefined, name: string) {
  if (!header) return undefined;
  for (const part of header.split(';')) {
    const [k, ...v] = part.trim().split('=');
    if (k === name) return decodeURIComponent(v.join('='));
  }
  return undefined;
}

/**
 * Double-submit token: the signed token sits in an HttpOnly cookie and must come back, equal, in the
 * x-csrf-token header of every state-changing request. The signature stops a made-up cookie; and
 * because anyone can fetch a validly signed token of their own, a signed-in session also remembers
 * the nonce it signed in with and refuses any other (a token planted from another browser).
 */
export function csrfProtection(secret: string): RequestHandler {
  return (req, _res, next) => {
    if (SAFE.has(req.method)) return next();
    const header = req.get('x-csrf-token');
    const cookie = readCookie(req.headers.cookie, CSRF_COOKIE);
    const bound = req.session?.userId ? req.session.csrfNonce : undefined;
    if (!header || !cookie || header !== cookie || !valid(secret, header) || (bound && csrfNonceOf(header) !== bound)) {
      return next(new AppError('csrf_failed', 'The form has expired or the security token is missing. Reload the page and try again.'));
    }
    next();
  };
}
