import type { RequestHandler, Request } from 'express';
import type { AppDeps } from '../deps';
import { AppError } from '../errors/app-error';
import { accessCache } from '../lib/access-cache';
import { accessVersionOf } from './session';

/** The idle timer moves at most once a minute, so an active session is written back at most that often. */
const IDLE_TIMER_STEP_MS = 60_000;

/**
 * Loads the signed-in user and their memberships in the active tenant, enforces the idle and absolute
 * session timeouts against the injected clock, and attaches the CASL ability. The person, memberships
 * and rules come from the per-process access cache while the access version read with the session
 * still matches; the session is written back only when something in it changed.
 */
export function authenticate(deps: AppDeps): RequestHandler {
  const idleMs = deps.config.SESSION_IDLE_MINUTES * 60_000;
  const absoluteMs = deps.config.SESSION_ABSOLUTE_HOURS * 3600_000;
  const cache = accessCache(deps);
  const end = async (req: Request) => {
    cache.dropSession(req.sessionID);
    await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
  };
  return async (req, _res, next) => {
    const s = req.session;
    if (!s?.userId) return next();
    const version = accessVersionOf(req);
    const now = deps.clock.now().getTime();
    if (now - (s.lastSeenAt ?? 0) > idleMs || now - (s.createdAt ?? 0) > absoluteMs) {
      await end(req);
      return next(new AppError('unauthenticated', 'Your session has ended. Sign in again.'));
    }
    // Idle time counts from the last step of the timer, so a session may end up to a minute early, never late.
    if (now - (s.lastSeenAt ?? 0) >= IDLE_TIMER_STEP_MS) s.lastSeenAt = now;
    const access = await cache.load(req.sessionID, s.userId, s.tenantId ?? null, version);
    if (!access) {
      await end(req);
      return next(new AppError('unauthenticated', 'Your session has ended. Sign in again.'));
    }
    req.user = access.user;
    req.actor = access.actor ?? undefined;
    req.ability = access.ability ?? undefined;
    req.access = access;
    next();
  };
}

export const requireSignIn: RequestHandler = (req, _res, next) => {
  if (!req.user) return next(new AppError('unauthenticated', 'Sign in to continue.'));
  next();
};

/** Signed in and working inside a tenant; most routes need this. */
export const requireTenant: RequestHandler = (req, _res, next) => {
  if (!req.user) return next(new AppError('unauthenticated', 'Sign in to continue.'));
  if (!req.actor || !req.ability) return next(AppError.forbidden('You have no role in an active tenant.'));
  next();
};

export function actorOf(req: Request) {
  if (!req.actor || !req.ability || !req.user) throw new AppError('unauthenticated', 'Sign in to continue.');
  return { actor: req.actor, ability: req.ability, user: req.user };
}
