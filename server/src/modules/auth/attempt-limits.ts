import { setTimeout as sleep } from 'node:timers/promises';
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
}

export const defaultAuthLimits: Required<AuthLimits> = {
  perIp: 100,
  perAccount: 5,
  windowMs: 15 * 60_000,
  failureDelay: { baseMs: 1_000, maxMs: 10_000 },
  signatureFailures: 5,
  resetsPerAddress: 3,
};

export const RESET_WINDOW_SECONDS = 3600;

const waitText = (ms: number) => {
  const minutes = Math.max(1, Math.ceil(ms / 60_000));
  return `${minutes} minute${minutes === 1 ? '' : 's'}`;
};

export function tooManyResetRequests(retryAfterSeconds: number) {
  return new AppError('rate_limited', `Too many reset requests for this address. Wait ${waitText(retryAfterSeconds * 1000)} and try again.`);
}

interface Failures {
  count: number;
  /** The first failure of the current run (signatures) or the latest one (sign-in). */
  at: number;
}

/**
 * Failed-attempt limits of one server, kept in one place so they can move to PostgreSQL (several
 * processes) without touching the code that calls them. Times come from the injected clock.
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
 * person's signatures are refused until the window has passed.
 */
export class AttemptLimits {
  private readonly signIns = new Map<string, Failures>();
  private readonly signatures = new Map<string, Failures>();

  constructor(
    private readonly clock: AppDeps['clock'],
    readonly limits: Required<AuthLimits>,
  ) {}

  private now() {
    return this.clock.now().getTime();
  }

  /** The delay before answering the `count`-th failure in a row. */
  failureDelayMs(count: number) {
    const over = count - this.limits.perAccount;
    if (over <= 0) return 0;
    const { baseMs, maxMs } = this.limits.failureDelay;
    return Math.min(baseMs * 2 ** Math.min(over - 1, 30), maxMs);
  }

  /** Records a failed sign-in of `account` and waits as long as its failures so far call for. */
  async signInFailed(account: string) {
    const key = account.trim().toLowerCase();
    const now = this.now();
    const known = this.signIns.get(key);
    const count = known && now - known.at < this.limits.windowMs ? known.count + 1 : 1;
    this.signIns.set(key, { count, at: now });
    this.forgetOld(this.signIns, now);
    const delay = this.failureDelayMs(count);
    if (delay > 0) await sleep(delay);
  }

  signInSucceeded(account: string) {
    this.signIns.delete(account.trim().toLowerCase());
  }

  /** Refuses (429) while this person has had too many wrong signature passwords. */
  checkSignature(userId: string) {
    const known = this.signatures.get(userId);
    if (!known) return;
    const left = known.at + this.limits.windowMs - this.now();
    if (left <= 0) this.signatures.delete(userId);
    else if (known.count >= this.limits.signatureFailures)
      throw new AppError('rate_limited', `Too many wrong passwords when signing. Wait ${waitText(left)} and try again.`);
  }

  signatureFailed(userId: string) {
    const now = this.now();
    const known = this.signatures.get(userId);
    if (known && now - known.at < this.limits.windowMs) known.count++;
    else this.signatures.set(userId, { count: 1, at: now });
    this.forgetOld(this.signatures, now);
  }

  signatureSucceeded(userId: string) {
    this.signatures.delete(userId);
  }

  /** Keeps memory bounded when many addresses are tried: old entries go once the map grows. */
  private forgetOld(map: Map<string, Failures>, now: number) {
    if (map.size < 10_000) return;
    for (const [key, f] of map) if (now - f.at >= this.limits.windowMs) map.delete(key);
  }
}

// One set of counters per running app (tests start several in one process); keyed on its config.
const perApp = new WeakMap<object, AttemptLimits>();

/** Called once by the auth router with the app's limits. */
export function setUpAttemptLimits(deps: Pick<AppDeps, 'config' | 'clock'>, limits: Partial<AuthLimits> = {}) {
  const merged: Required<AuthLimits> = { ...defaultAuthLimits, perIp: deps.config.SIGN_IN_LIMIT_PER_IP, ...limits };
  const made = new AttemptLimits(deps.clock, merged);
  perApp.set(deps.config, made);
  return made;
}

export function attemptLimits(deps: Pick<AppDeps, 'config' | 'clock'>) {
  return perApp.get(deps.config) ?? setUpAttemptLimits(deps);
}
