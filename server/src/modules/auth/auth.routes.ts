// Sign-in and account routes.
//   GET  /api/auth/csrf              anyone: the double-submit token
//   POST /api/auth/sign-in           anyone (hard limit per IP; failures of one account answered ever more slowly, never locked)
//   POST /api/auth/sign-out          anyone (ends the session when there is one; clears the cookie)
//   GET  /api/auth/me                signed in
//   POST /api/auth/switch-tenant     signed in, member of that tenant
//   POST /api/auth/accept-invitation anyone holding a valid invitation token (hard limit per IP, and per invitation on failed tries)
//   POST /api/auth/forgot-password   anyone (same answer whether or not the account exists; a few per address and hour)
//   POST /api/auth/reset-password    anyone holding a valid reset token
import { Router } from 'express';
import { rateLimit, ipKeyGenerator, type Options } from 'express-rate-limit';
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
import { clientIp } from '../../lib/client-ip';
import { CSRF_COOKIE, issueCsrfToken } from '../../middleware/csrf';
import { SECURE_SESSION_COOKIE, SESSION_COOKIE } from '../../middleware/session';
import { acceptInvitation, forgotPassword, meOf, resetPassword, signIn, signOut, switchTenant } from './auth.service';
import { setUpAttemptLimits, tooManyResetRequests, type AuthLimits } from './attempt-limits';
import { PostgresRateLimitStore } from './rate-limit-store';

export { defaultAuthLimits, type AuthLimits } from './attempt-limits';

function limiter(store: PostgresRateLimitStore, max: number, windowMs: number, key: (req: import('express').Request) => string, message: string, more: Partial<Options> = {}) {
  const minutes = Math.max(1, Math.ceil(windowMs / 60_000));
  return rateLimit({
    windowMs,
    limit: max,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    keyGenerator: key,
    // Counted in PostgreSQL, so every server process behind a balancer counts the same attempts.
    store,
    // X-Forwarded-For from anyone but a proxy named in TRUST_PROXY is ignored on purpose, not a misconfiguration.
    validate: { xForwardedForHeader: false },
    handler: (_req, _res, next) => next(new AppError('rate_limited', `${message} Wait ${minutes} minute${minutes === 1 ? '' : 's'} and try again.`)),
    ...more,
  });
}

export function createAuthRouter(deps: AppDeps, authLimits?: AuthLimits) {
  const router = Router();
  const limits = setUpAttemptLimits(deps, authLimits).limits;
  const secure = deps.config.PUBLIC_URL.startsWith('https://');

  router.get('/auth/csrf', (req, res) => {
    const token = issueCsrfToken(deps.config.SESSION_SECRET, req.session?.userId ? req.session.csrfNonce : undefined);
    res.cookie(CSRF_COOKIE, token, { httpOnly: true, sameSite: 'lax', secure, path: '/' });
    res.json({ csrfToken: token });
  });

  const perIp = limiter(new PostgresRateLimitStore(deps, 'ip'), limits.perIp, limits.windowMs, (req) => `ip:${ipKeyGenerator(clientIp(req) ?? req.socket.remoteAddress ?? '')}`, 'Too many attempts from this network.');
  // Per account there is no hard limit on purpose (it would lock the real person out): see attempt-limits.ts.
  router.post('/auth/sign-in', perIp, async (req, res) => {
    const input = parse(signInInputSchema, req.body, 'sign-in');
    res.json(await signIn(deps, req, input));
  });

  router.post('/auth/sign-out', async (req, res) => {
    await signOut(deps, req);
    res.clearCookie(secure ? SECURE_SESSION_COOKIE : SESSION_COOKIE, { path: '/', httpOnly: true, sameSite: 'lax', secure });
    res.status(204).end();
  });

  router.get('/auth/me', requireSignIn, async (req, res) => {
    res.json(await meOf(deps, req));
  });

  router.post('/auth/switch-tenant', requireSignIn, async (req, res) => {
    const { tenantId } = parse(switchTenantInputSchema, req.body);
    res.json(await switchTenant(deps, req, tenantId));
  });

  // An invitation to an address that already has an account asks for that account's password, so failed
  // tries are also counted per invitation: guesses spread over many addresses still run out. Accepted
  // invitations take their try back; the store keeps only a hash of the token.
  const invitationToken = (req: import('express').Request): unknown => (req.body as { token?: unknown } | undefined)?.token;
  const perInvitation = limiter(new PostgresRateLimitStore(deps, 'invite'), limits.invitationFailures, limits.windowMs, (req) => `invite:${String(invitationToken(req))}`, 'Too many failed tries with this invitation.', {
    skip: (req) => typeof invitationToken(req) !== 'string',
    skipSuccessfulRequests: true,
  });
  router.post('/auth/accept-invitation', perIp, perInvitation, async (req, res) => {
    await acceptInvitation(deps, parse(acceptInvitationInputSchema, req.body, 'invitation'));
    res.json({ ok: true });
  });

  router.post('/auth/forgot-password', perIp, async (req, res) => {
    const { email } = parse(forgotPasswordInputSchema, req.body);
    const retryAfterSeconds = await forgotPassword(deps, email, limits.resetsPerAddress);
    if (retryAfterSeconds > 0) {
      res.set('Retry-After', String(retryAfterSeconds));
      throw tooManyResetRequests(retryAfterSeconds);
    }
    res.json({ ok: true, message: 'If an account uses that address, a reset link is on its way.' });
  });

  router.post('/auth/reset-password', perIp, async (req, res) => {
    await resetPassword(deps, parse(resetPasswordInputSchema, req.body, 'reset'));
    res.json({ ok: true });
  });

  return router;
}
