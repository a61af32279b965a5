import type { RequestHandler, Request } from 'express';
import { defineAbilityFor } from '@shared/abilities/define-ability';
import type { AppDeps } from '../deps';
import { AppError } from '../errors/app-error';
import { loadActor } from '../lib/actor';

/**
 * Loads the signed-in user and their memberships in the active tenant, enforces the idle and absolute
 * session timeouts against the injected clock, and attaches the CASL ability.
 */
export function authenticate(deps: AppDeps): RequestHandler {
  const idleMs = deps.config.SESSION_IDLE_MINUTES * 60_000;
  const absoluteMs = deps.config.SESSION_ABSOLUTE_HOURS * 3600_000;
  return async (req, _res, next) => {
    const s = req.session;
    if (!s?.userId) return next();
    const now = deps.clock.now().getTime();
    if (now - (s.lastSeenAt ?? 0) > idleMs || now - (s.createdAt ?? 0) > absoluteMs) {
      await new Promise<void>((resolve) => s.destroy(() => resolve()));
      return next(new AppError('unauthenticated', 'Your session has ended. Sign in again.'));
    }
    s.lastSeenAt = now;
    const loaded = await loadActor(deps.sequelize, s.userId, s.tenantId ?? null);
    if (!loaded) {
      await new Promise<void>((resolve) => s.destroy(() => resolve()));
      return next(new AppError('unauthenticated', 'Your session has ended. Sign in again.'));
    }
    req.user = loaded.user;
    req.actor = loaded.actor ?? undefined;
    req.ability = loaded.actor ? defineAbilityFor(loaded.actor) : undefined;
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
