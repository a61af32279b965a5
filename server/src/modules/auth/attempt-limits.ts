import { setTimeout as sleep } from 'node:timers/promises';
import { createHash } from 'node:crypto';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';

export interface AuthLimits {
  /** Requests per network address and window on sign-in and the token routes: a hard limit (429). */
  perIp: number;
  /** Failed sign-ins of one account answered at once; each failure after these is answered more slowly. */
  perAccount: number;
  /** How long failures are remembered (sign-in and signatures) and the per-IP window. */
  windowMs: number;
  /** The first slowed failure waits `baseMs`, each further one twice as long, never more than `maxMs`. */
  failureDelay?: { baseMs: number; maxMs: number };
  /** Wrong passwords when signing (permits, handovers) per person and window, then 429 until the window ends. */
  signatureFailures?: number;
  /** Password-reset requests per e-mail address and hour, then 429 (the same for known and unknown addresses). */
  resetsPerAddress?: number;
  /** Failed tries to accept one invitation per window, from any address, then 429 until the window ends. */
  invitationFailures?: number;
}

export const defaultAuthLimits: Required<AuthLimits> = {
  perIp: 100,
  perAccount: 5,
  windowMs: 15 * 60_000,
  failureDelay: { baseMs: 1_000, maxMs: 10_000 },
  signatureFailures: 5,
  resetsPerAddress: 3,
  invitationFailures: 10,
};

export const RESET_WINDOW_SECONDS = 3600;

const waitText = (ms: number) => {
  const minutes = Math.max(1, Math.ceil(ms / 60_000));
  return `${minutes} minute${minutes === 1 ? '' : 's'}`;
};

export function tooManyResetRequests(retryAfterSeconds: number) {
  return new AppError('rate_limited', `Too many reset requests for this address. Wait ${waitText(retryAfterSeconds * 1000)} and try again.`);
}

const WINDOW_SQL = `$2::timestamptz - $3::double precision * interval '1 millisecond'`;

/** Counters are kept under a hash: the table holds no address and no person's id. */
const counterKey = (kind: 'sign-in' | 'signature', who: string) => `${kind}:${createHash('sha256').update(who).digest('base64url')}`;

/**
 * Failed-attempt limits, kept in PostgreSQL (`auth_attempts`, migration 0170) so that every server
 * process counts the same attempts. Times come from the injected clock. The counters go through the
 * plain pool, outside any transaction the caller has open: a failure counts even when the request's
 * own transaction rolls back.
 *
 * Sign-in never locks an account. A lock-out (refusing an account for a while after N failures)
 * lets anyone who knows an address keep its owner out; refusing only *wrong* passwords while the
 * account is locked would still tell a guesser which password is right, so it would slow nothing.
 * Instead the password is always checked, a right one is answered at once whatever happened before,
 * and only the answer to a wrong one is held back: after `perAccount` failures each further failure
 * waits twice as long as the one before (capped). A guesser working through one account one attempt
 * at a time is slowed to the cap; many attempts at once from one address run into the hard per-IP
 * limit on the route. Failures are forgotten `windowMs` after the last one, and at a right password.
 *
 * Signatures (the password typed again to approve, accept or hand over a permit) come from someone
 * already signed in, so a hard limit is safe there: after `signatureFailures` wrong passwords the
 * person's signatures are refused until the window (from the first of them) has passed.
 */
export class AttemptLimits {
  constructor(
    private readonly deps: Pick<AppDeps, 'clock' | 'pgPool'>,
    readonly limits: Required<AuthLimits>,
  ) {}

  /** The delay before answering the `count`-th failure in a row. */
  failureDelayMs(count: number) {
    const over = count - this.limits.perAccount;
    if (over <= 0) return 0;
    const { baseMs, maxMs } = this.limits.failureDelay;
    return Math.min(baseMs * 2 ** Math.min(over - 1, 30), maxMs);
  }

  /** Adds a failure; a run older than the window (from its `since` column) starts again at one. */
  private async count(key: string, since: 'first_at' | 'last_at') {
    const now = this.deps.clock.now();
    const { rows } = await this.deps.pgPool.query<{ failures: number }>(
      `INSERT INTO auth_attempts (key, failures, first_at, last_at) VALUES ($1, 1, $2, $2)
       ON CONFLICT (key) DO UPDATE SET
         failures = CASE WHEN auth_attempts.${since} <= ${WINDOW_SQL} THEN 1 ELSE auth_attempts.failures + 1 END,
         first_at = CASE WHEN auth_attempts.${since} <= ${WINDOW_SQL} THEN $2 ELSE auth_attempts.first_at END,
         last_at = $2
       RETURNING failures`,
      [key, now, this.limits.windowMs],
    );
    // Keeps the table small when many addresses are tried: now and then, forget runs long over.
    if (Math.random() < 0.02) await this.deps.pgPool.query(`DELETE FROM auth_attempts WHERE last_at <= $1::timestamptz - $2::double precision * interval '1 millisecond'`, [now, this.limits.windowMs]);
    return rows[0].failures;
  }

  private forget(key: string) {
    return this.deps.pgPool.query(`DELETE FROM auth_attempts WHERE key = $1`, [key]);
  }

  /** Records a failed sign-in of `account` and waits as long as its failures so far call for. */
  async signInFailed(account: string) {
    const count = await this.count(counterKey('sign-in', account.trim().toLowerCase()), 'last_at');
    const delay = this.failureDelayMs(count);
    if (delay > 0) await sleep(delay);
  }

  async signInSucceeded(account: string) {
    await this.forget(counterKey('sign-in', account.trim().toLowerCase()));
  }

  /** Refuses (429) while this person has had too many wrong signature passwords; true when some are on record. */
  async checkSignature(userId: string): Promise<boolean> {
    const { rows } = await this.deps.pgPool.query<{ failures: number; first_at: Date }>(`SELECT failures, first_at FROM auth_attempts WHERE key = $1`, [counterKey('signature', userId)]);
    const known = rows[0];
    if (!known) return false;
    const left = known.first_at.getTime() + this.limits.windowMs - this.deps.clock.now().getTime();
    if (left > 0 && known.failures >= this.limits.signatureFailures)
      throw new AppError('rate_limited', `Too many wrong passwords when signing. Wait ${waitText(left)} and try again.`);
    return true;
  }

  async signatureFailed(userId: string) {
    await this.count(counterKey('signature', userId), 'first_at');
  }

  async signatureSucceeded(userId: string) {
    await this.forget(counterKey('signature', userId));
  }
}

// One set of counters per running app (tests start several in one process); keyed on its config.
const perApp = new WeakMap<object, AttemptLimits>();

/** Called once by the auth router with the app's limits. */
export function setUpAttemptLimits(deps: Pick<AppDeps, 'config' | 'clock' | 'pgPool'>, limits: Partial<AuthLimits> = {}) {
  const merged: Required<AuthLimits> = { ...defaultAuthLimits, perIp: deps.config.SIGN_IN_LIMIT_PER_IP, ...limits };
  const made = new AttemptLimits(deps, merged);
  perApp.set(deps.config, made);
  return made;
}

export function attemptLimits(deps: Pick<AppDeps, 'config' | 'clock' | 'pgPool'>) {
  return perApp.get(deps.config) ?? setUpAttemptLimits(deps);
}
