import { QueryTypes } from 'sequelize';
import type { Request } from 'express';
import { packRules } from '@casl/ability/extra';
import { defineRulesFor } from '@shared/abilities/define-ability';
import type { AcceptInvitationInput, InviteInput, ResetPasswordInput, SignInInput } from '@shared/schemas/auth.schema';
import type { MeResponse } from '@shared/types/auth';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { withTenant } from '../../db/sequelize';
import { loadActor, membershipsOf } from '../../lib/actor';
import { accessCache, announceAccessChanged } from '../../lib/access-cache';
import { enqueueMail } from '../../lib/mailer';
import { hashPassword, verifyPassword } from '../../lib/passwords';
import { hashToken, newToken } from '../../lib/tokens';
import { csrfNonceOf, newCsrfNonce } from '../../middleware/csrf';
import { findUserByEmail, tenantSummary } from './auth.repository';
import { attemptLimits, RESET_WINDOW_SECONDS } from './attempt-limits';

const INVITE_HOURS = 72;
const RESET_HOURS = 1;
const SIGN_IN_FAILED = 'E-mail or password is incorrect.';

function regenerate(req: Request) {
  return new Promise<void>((resolve, reject) => req.session.regenerate((err) => (err ? reject(err) : resolve())));
}
function save(req: Request) {
  return new Promise<void>((resolve, reject) => req.session.save((err) => (err ? reject(err) : resolve())));
}

export async function buildMe(deps: AppDeps, userId: string, tenantId: string | null): Promise<MeResponse> {
  const loaded = await loadActor(deps.sequelize, userId, tenantId);
  if (!loaded) throw new AppError('unauthenticated', 'Sign in to continue.');
  return meFrom(deps, loaded, tenantId);
}

/** /me for a signed-in request: worked out once per kept access (see lib/access-cache). */
export function meOf(deps: AppDeps, req: Request): Promise<MeResponse> {
  const access = req.access;
  if (!access || !req.user) throw new AppError('unauthenticated', 'Sign in to continue.');
  const tenantId = req.session.tenantId ?? null;
  return accessCache(deps).memo(access, `me:${tenantId}`, () => meFrom(deps, access, tenantId));
}

async function meFrom(deps: AppDeps, loaded: NonNullable<Awaited<ReturnType<typeof loadActor>>>, tenantId: string | null): Promise<MeResponse> {
  const rules = loaded.actor ? packRules(defineRulesFor(loaded.actor)) : [];
  return {
    user: loaded.user,
    memberships: loaded.memberships,
    activeTenantId: loaded.actor ? tenantId : null,
    activeTenant: loaded.actor && tenantId ? await tenantSummary(deps.sequelize, tenantId) : null,
    rules,
  };
}

export async function signIn(deps: AppDeps, req: Request, input: SignInInput): Promise<MeResponse> {
  const user = await findUserByEmail(deps.sequelize, input.email);
  const ok = await verifyPassword(user?.password_hash, input.password);
  const limits = attemptLimits(deps);
  if (!user || !ok || user.disabled_at) {
    req.log?.info({ event: 'sign_in_failed', email: input.email }, 'sign-in failed');
    // Known and unknown addresses are slowed alike, so the delay does not tell them apart.
    await limits.signInFailed(input.email);
    throw new AppError('unauthenticated', SIGN_IN_FAILED);
  }
  await limits.signInSucceeded(input.email);
  const memberships = await membershipsOf(deps.sequelize, user.id);
  // Whoever held the session this browser carried may know its CSRF nonce: then the new session gets a fresh one.
  const carriedSession = Boolean(req.session.userId);
  // A new session id at sign-in stops session fixation.
  await regenerate(req);
  const now = deps.clock.now().getTime();
  req.session.userId = user.id;
  req.session.tenantId = memberships[0]?.tenantId ?? null;
  req.session.createdAt = now;
  req.session.lastSeenAt = now;
  // From now on the session accepts only tokens with this nonce: the one this sign-in used (the page
  // keeps it), or a fresh one the page fetches again from /api/auth/csrf after its next csrf_failed.
  req.session.csrfNonce = (carriedSession ? undefined : csrfNonceOf(req.get('x-csrf-token'))) ?? newCsrfNonce();
  await save(req);
  req.log?.info({ event: 'sign_in', userId: user.id }, 'signed in');
  return buildMe(deps, user.id, req.session.tenantId ?? null);
}

export async function switchTenant(deps: AppDeps, req: Request, tenantId: string): Promise<MeResponse> {
  const userId = req.session.userId!;
  const memberships = await membershipsOf(deps.sequelize, userId);
  // Not a member: answer as if the tenant did not exist.
  if (!memberships.some((m) => m.tenantId === tenantId)) throw AppError.notFound('tenant');
  req.session.tenantId = tenantId;
  await save(req);
  return buildMe(deps, userId, tenantId);
}

export async function signOut(deps: AppDeps, req: Request) {
  const userId = req.session?.userId;
  accessCache(deps).dropSession(req.sessionID);
  await new Promise<void>((resolve) => req.session.destroy(() => resolve()));
  if (userId) await announceAccessChanged(deps, userId);
}

export async function invite(deps: AppDeps, tenantId: string, invitedBy: string, input: InviteInput) {
  // Organisations, the tenant and the outbox row are tenant data: one withTenant transaction for all of it.
  await withTenant(deps.sequelize, tenantId, async (t) => {
    const orgs = await deps.sequelize.query<{ name: string }>(`SELECT name FROM organisations WHERE id = :id AND tenant_id = :tenantId`, {
      replacements: { id: input.organisationId, tenantId },
      type: QueryTypes.SELECT,
    });
    if (!orgs[0]) throw AppError.validation('Choose an organisation of this tenant.', [{ path: 'organisationId', message: 'Unknown organisation.' }]);
    const token = newToken();
    const tenant = await tenantSummary(deps.sequelize, tenantId);
    await deps.sequelize.query(
      `INSERT INTO auth_tokens (kind, token_hash, email, tenant_id, organisation_id, role, created_by, expires_at)
       VALUES ('invite', :hash, :email, :tenantId, :organisationId, :role, :by, :expires)`,
      {
        replacements: { hash: hashToken(token), email: input.email, tenantId, organisationId: input.organisationId, role: input.role, by: invitedBy, expires: new Date(deps.clock.now().getTime() + INVITE_HOURS * 3600_000) },
        transaction: t,
      },
    );
    await enqueueMail(
      deps.sequelize,
      {
        tenantId,
        to: input.email,
        subject: `You are invited to ${tenant?.name ?? 'a tenant'} on Holdpoint`,
        text: [
          `You have been invited to join ${tenant?.name} (${orgs[0].name}) on Holdpoint.`,
          '',
          `Accept the invitation and choose a password: ${deps.config.PUBLIC_URL}/accept-invitation?token=${token}`,
          '',
          `The link works once and expires in ${INVITE_HOURS} hours.`,
        ].join('\n'),
      },
      t,
    );
  });
  req_log(deps, { event: 'invitation_sent', tenantId, by: invitedBy, role: input.role });
}

function req_log(deps: AppDeps, obj: Record<string, unknown>) {
  deps.logger.info(obj, String(obj.event));
}

interface TokenRow {
  id: string;
  kind: 'invite' | 'reset';
  email: string;
  user_id: string | null;
  tenant_id: string | null;
  organisation_id: string | null;
  role: string | null;
  expires_at: Date;
  used_at: Date | null;
}

async function claimToken(deps: AppDeps, token: string, kind: TokenRow['kind'], t: import('sequelize').Transaction) {
  const rows = await deps.sequelize.query<TokenRow>(`SELECT * FROM auth_tokens WHERE token_hash = :hash AND kind = :kind FOR UPDATE`, {
    replacements: { hash: hashToken(token), kind },
    type: QueryTypes.SELECT,
    transaction: t,
  });
  const row = rows[0];
  const what = kind === 'invite' ? 'invitation' : 'reset link';
  if (!row || row.used_at) throw AppError.unprocessable(`This ${what} is not valid or has already been used.`);
  if (row.expires_at.getTime() < deps.clock.now().getTime()) throw AppError.unprocessable(`This ${what} has expired. Ask for a new one.`);
  await deps.sequelize.query(`UPDATE auth_tokens SET used_at = :now WHERE id = :id`, { replacements: { id: row.id, now: deps.clock.now() }, transaction: t });
  return row;
}

export async function acceptInvitation(deps: AppDeps, input: AcceptInvitationInput) {
  // The membership it adds is tenant data under row-level security: find the invitation's tenant
  // first, then claim the token and write everything in that tenant's one transaction.
  const [invitation] = await deps.sequelize.query<{ tenant_id: string | null }>(`SELECT hp_invitation_tenant(:hash) AS tenant_id`, {
    replacements: { hash: hashToken(input.token) },
    type: QueryTypes.SELECT,
  });
  if (!invitation?.tenant_id) throw AppError.unprocessable('This invitation is not valid or has already been used.');
  await withTenant(deps.sequelize, invitation.tenant_id, async (t) => {
    const row = await claimToken(deps, input.token, 'invite', t);
    let user = await findUserByEmail(deps.sequelize, row.email, t);
    if (user?.password_hash) {
      // An existing account proves who it is with its own password; the invitation cannot reset it.
      if (!(await verifyPassword(user.password_hash, input.password))) {
        throw AppError.validation('This e-mail already has an account: enter its current password to accept.', [{ path: 'password', message: 'Enter your current password.' }]);
      }
    } else if (user) {
      await deps.sequelize.query(`UPDATE users SET name = :name, password_hash = :hash, updated_at = now() WHERE id = :id`, {
        replacements: { id: user.id, name: input.name, hash: await hashPassword(input.password) },
        transaction: t,
      });
    } else {
      const created = await deps.sequelize.query<{ id: string }>(`INSERT INTO users (email, name, password_hash) VALUES (:email, :name, :hash) RETURNING id`, {
        replacements: { email: row.email, name: input.name, hash: await hashPassword(input.password) },
        type: QueryTypes.SELECT,
        transaction: t,
      });
      user = { id: created[0].id, email: row.email, name: input.name, password_hash: null, disabled_at: null };
    }
    await deps.sequelize.query(
      `INSERT INTO memberships (tenant_id, organisation_id, user_id, role) VALUES (:tenantId, :organisationId, :userId, :role)
       ON CONFLICT (tenant_id, user_id, organisation_id, role) DO NOTHING`,
      { replacements: { tenantId: row.tenant_id, organisationId: row.organisation_id, userId: user.id, role: row.role }, transaction: t },
    );
    deps.logger.info({ event: 'membership_added', userId: user.id, tenantId: row.tenant_id, role: row.role }, 'invitation accepted');
  });
}

/**
 * Queues a reset link when the address belongs to an active account; answers how many seconds to wait
 * (0 = accepted) when the address has asked too often. Everything that could differ between a known
 * and an unknown address happens in one database function (migration 0100): this side builds the
 * token and the mail the same way for both and sends the same one statement, and the mail itself
 * goes out later through the outbox.
 */
export async function forgotPassword(deps: AppDeps, email: string, perHour: number): Promise<number> {
  const token = newToken();
  const now = deps.clock.now();
  const text = [
    'Someone asked to reset the password of this Holdpoint account. If it was not you, ignore this mail.',
    '',
    `Choose a new password: ${deps.config.PUBLIC_URL}/reset-password?token=${token}`,
    '',
    `The link works once and expires in ${RESET_HOURS} hour.`,
  ].join('\n');
  const [{ wait }] = await deps.sequelize.query<{ wait: number }>(
    `SELECT hp_request_password_reset(:email, :hash, :now, :expires, :subject, :text, :perHour, :window) AS wait`,
    {
      replacements: { email, hash: hashToken(token), now, expires: new Date(now.getTime() + RESET_HOURS * 3600_000), subject: 'Reset your Holdpoint password', text, perHour, window: RESET_WINDOW_SECONDS },
      type: QueryTypes.SELECT,
    },
  );
  return wait;
}

export async function resetPassword(deps: AppDeps, input: ResetPasswordInput) {
  await deps.sequelize.transaction(async (t) => {
    // Reset links carry no tenant: they are claimed through an owner-run function, which also spends
    // every other outstanding reset link of the account.
    const [claim] = await deps.sequelize.query<{ outcome: 'ok' | 'invalid' | 'expired'; userId: string | null }>(
      `SELECT outcome, reset_user AS "userId" FROM hp_claim_reset_token(:hash, :now)`,
      { replacements: { hash: hashToken(input.token), now: deps.clock.now() }, type: QueryTypes.SELECT, transaction: t },
    );
    if (claim.outcome === 'expired') throw AppError.unprocessable('This reset link has expired. Ask for a new one.');
    if (claim.outcome !== 'ok' || !claim.userId) throw AppError.unprocessable('This reset link is not valid or has already been used.');
    await deps.sequelize.query(`UPDATE users SET password_hash = :hash, updated_at = now() WHERE id = :id`, {
      replacements: { id: claim.userId, hash: await hashPassword(input.password) },
      transaction: t,
    });
    // Every existing session of the account ends with the old password.
    await deps.sequelize.query(`DELETE FROM http_sessions WHERE sess->>'userId' = :id`, { replacements: { id: claim.userId }, transaction: t });
    deps.logger.info({ event: 'password_reset', userId: claim.userId }, 'password reset');
  });
}
