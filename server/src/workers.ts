import type { AppDeps } from './deps';
import { deliverDueMail } from './lib/mailer';
import { runSchedulerTick } from './modules/gas-tests/scheduler';

/** Background loops of one server process; safe to run in several processes at once (SKIP LOCKED). */
export function startWorkers(deps: AppDeps, intervalMs = 1_000) {
  let running = false;
  let stopped = false;
  const tick = async () => {
    if (running || stopped) return;
    running = true;
    try {
      await deliverDueMail(deps.sequelize, deps.mailTransport, deps.config.MAIL_FROM, deps.logger);
      await runSchedulerTick(deps);
    } catch (err) {
      deps.logger.debug({ err: (err as Error).message }, 'worker tick failed');
    } finally {
      running = false;
    }
  };
  const timer = setInterval(() => void tick(), intervalMs);
  timer.unref();
  return {
    tick,
    stop() {
      stopped = true;
      clearInterval(timer);
    },
  };
}
