// Sign-in and account routes.
//   GET  /api/auth/csrf              anyone: the double-submit token
//   POST /api/auth/sign-in           anyone (rate-limited per IP and per account)
//   POST /api/auth/sign-out          anyone (ends the session when there is one; clears the cookie)
//   GET  /api/auth/me                signed in
//   POST /api/auth/switch-tenant     signed in, member of that tenant
//   POST /api/auth/accept-invitation anyone holding a valid invitation token
//   POST /api/auth/forgot-password   anyone (same answer whether or not the account exists)
//   POST /api/auth/reset-password    anyone holding a valid reset token
import { Router } from 'express';
import { rateLimit, ipKeyGenerator } from 'express-rate-limit';
import {
  acceptInvitationInputSchema,
  forgotPasswordInputSchema,
  resetPasswordInputSchema,
  signInInputSchema,
  switchTenantInputSchema,
} from '@shared/schemas/auth.schema';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { parse } from '../../middleware/validate';
import { requireSignIn } from '../../middleware/authenticate';
import { CSRF_COOKIE, issueCsrfToken } from '../../middleware/csrf';
import { SECURE_SESSION_COOKIE, SESSION_COOKIE } from '../../middleware/session';
import { acceptInvitation, buildMe, forgotPassword, resetPassword, signIn, signOut, switchTenant } from './auth.service';

export interface AuthLimits {
  perIp: number;
  perAccount: number;
  windowMs: number;
}

export const defaultAuthLimits: AuthLimits = { perIp: 100, perAccount: 10, windowMs: 15 * 60_000 };

function limiter(max: number, windowMs: number, key: (req: import('express').Request) => string, message: string, onlyFailures = false) {
  const minutes = Math.max(1, Math.ceil(windowMs / 60_000));
  return rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: key,
    // Per account only failures count: a person who signs in often must not lock themselves out.
    skipSuccessfulRequests: onlyFailures,
    handler: (_req, _res, next) => next(new AppError('rate_limited', `${message} Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`)),
  });
}

export function createAuthRouter(deps: AppDeps, limits: AuthLimits = defaultAuthLimits) {
  const router = Router();
  const secure = deps.config.PUBLIC_URL.startsWith('https://');

  router.get('/auth/csrf', (req, res) => {
    const token = issueCsrfToken(deps.config.SESSION_SECRET, req.session?.userId ? req.session.csrfNonce : undefined);
    res.cookie(CSRF_COOKIE, token, { httpOnly: true, sameSite: 'lax', secure, path: '/' });
    res.json({ csrfToken: token });
  });

  const perIp = limiter(limits.perIp, limits.windowMs, (req) => `ip:${ipKeyGenerator(req.ip ?? '')}`, 'Too many attempts from this network.');
  const perAccount = limiter(
    limits.perAccount,
    limits.windowMs,
    (req) => {
      const email = typeof req.body?.email === 'string' ? req.body.email.trim().toLowerCase().slice(0, 254) : '';
      return `acct:${email}`;
    },
    'Too many sign-in attempts for this account.',
    true,
  );

  router.post('/auth/sign-in', perIp, perAccount, async (req, res) => {
    const input = parse(signInInputSchema, req.body, 'sign-in');
    res.json(await signIn(deps, req, input));
  });

  router.post('/auth/sign-out', async (req, res) => {
    await signOut(req);
    res.clearCookie(secure ? SECURE_SESSION_COOKIE : SESSION_COOKIE, { path: '/', httpOnly: true, sameSite: 'lax', secure });
    res.status(204).end();
  });

  router.get('/auth/me', requireSignIn, async (req, res) => {
    res.json(await buildMe(deps, req.user!.id, req.session.tenantId ?? null));
  });

  router.post('/auth/switch-tenant', requireSignIn, async (req, res) => {
    const { tenantId } = parse(switchTenantInputSchema, req.body);
    res.json(await switchTenant(deps, req, tenantId));
  });

  router.post('/auth/accept-invitation', perIp, async (req, res) => {
    await acceptInvitation(deps, parse(acceptInvitationInputSchema, req.body, 'invitation'));
    res.json({ ok: true });
  });

  router.post('/auth/forgot-password', perIp, async (req, res) => {
    const { email } = parse(forgotPasswordInputSchema, req.body);
    await forgotPassword(deps, email);
    res.json({ ok: true, message: 'If an account uses that address, a reset link is on its way.' });
  });

  router.post('/auth/reset-password', perIp, async (req, res) => {
    await resetPassword(deps, parse(resetPasswordInputSchema, req.body, 'reset'));
    res.json({ ok: true });
  });

  return router;
}
