export interface RestartBackoffOptions {
  /** The wait before the first restart. */
  firstMs: number;
  /** Each further restart waits twice as long as the one before, never more than this. */
  maxMs: number;
  /** A process that stayed up this long was healthy: its next restart waits `firstMs` again. */
  healthyAfterMs: number;
}

export const defaultRestartBackoff: RestartBackoffOptions = { firstMs: 500, maxMs: 30_000, healthyAfterMs: 60_000 };

/**
 * When to start a server process again after it ended. A process that fails at start (a bad setting,
 * the database down, the port taken) would otherwise be restarted at once for ever, using the CPU and
 * filling the log; with this, the restarts come ever further apart until one stays up.
 */
export class RestartBackoff {
  private lastDelayMs = 0;
  private startedAt: number | null = null;

  constructor(private readonly options: RestartBackoffOptions = defaultRestartBackoff) {}

  /** The process was started at `now` (ms). */
  started(now: number) {
    this.startedAt = now;
  }

  /** The process ended at `now` (ms): how long to wait before starting the next one. */
  ended(now: number) {
    const { firstMs, maxMs, healthyAfterMs } = this.options;
    const stayedUp = this.startedAt === null ? 0 : now - this.startedAt;
    this.lastDelayMs = this.lastDelayMs === 0 || stayedUp >= healthyAfterMs ? firstMs : Math.min(this.lastDelayMs * 2, maxMs);
    return this.lastDelayMs;
  }
}
