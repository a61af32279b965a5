import type { AppDeps } from './deps';
import { deliverDueMail } from './lib/mailer';
import { runSchedulerTick } from './modules/gas-tests/scheduler';
import { runCheckpointTick } from './modules/audit/checkpoints';

/** The advisory lock that elects one round of the background loops across all server processes. */
export const WORKER_ROUND_LOCK_KEY = 465_376_469;

/**
 * Background loops (mail, scheduler), started in every server process. Each round is elected: the
 * process that gets the advisory lock runs it, the others skip that tick, so one round runs at a
 * time across processes and machines (rows are still claimed with SKIP LOCKED, a second guard).
 * `stop()` resolves once the round under way has finished.
 */
export function startWorkers(deps: AppDeps, intervalMs = 1_000) {
  let running: Promise<void> | null = null;
  let stopped = false;
  const round = async () => {
    // A transaction-scoped lock held by an open transaction on this connection for the round: a transaction
    // pooler (PgBouncer in transaction mode) keeps one server connection for it, where a session lock and
    // its unlock could land on two different ones.
    const client = await deps.pgPool.connect();
    let broken: Error | undefined;
    try {
      await client.query('BEGIN');
      const { rows } = await client.query<{ won: boolean }>('SELECT pg_try_advisory_xact_lock($1) AS won', [WORKER_ROUND_LOCK_KEY]);
      if (!rows[0]?.won) return;
      await deliverDueMail(deps.sequelize, deps.mailTransport, deps.config.MAIL_FROM, deps.logger);
      await runSchedulerTick(deps);
      await runCheckpointTick(deps);
    } finally {
      await client.query('COMMIT').catch((err: Error) => {
        broken = err;
      });
      client.release(broken);
    }
  };
  const tick = async () => {
    if (running || stopped) return running ?? undefined;
    running = round()
      .catch((err: Error) => deps.logger.debug({ err: err.message }, 'worker tick failed'))
      .finally(() => {
        running = null;
      });
    return running;
  };
  const timer = setInterval(() => void tick(), intervalMs);
  timer.unref();
  return {
    tick,
    /** No new round starts; resolves when the one under way (if any) is done. */
    async stop() {
      stopped = true;
      clearInterval(timer);
      await running;
    },
  };
}
