// GET /api/health        anyone; 200 when a real query succeeds, 503 when the database is down.
// GET /api/health/live   anyone; 200 while the process runs (liveness: restart it only when this fails).
// GET /api/health/ready  anyone; 200 when this process should get requests: database and file store reachable,
//                        not shutting down; 503 otherwise (the balancer's check). `replica`: the standby's state and lag as this
//                        process last measured it (null without DATABASE_REPLICA_URL); a standby down or behind sends reads to
//                        the primary and does not make the process unready.
// GET /api/meta          anyone; whether this is a demo server (the sign-in page lists demo accounts then).
import { Router } from 'express';
import type { AppDeps } from '../../deps';
import { drainState } from '../../lib/draining';
import { objectStorage } from '../../lib/storage';

const CHECK_MS = 3_000;

function within<T>(ms: number, work: Promise<T>): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error('timeout')), ms);
  });
  return Promise.race([work, timeout]).finally(() => clearTimeout(timer));
}

const reachable = (check: () => Promise<unknown>) =>
  within(CHECK_MS, check()).then(
    () => 'up' as const,
    () => 'down' as const,
  );

export function createHealthRouter({ sequelize, config, replica }: AppDeps) {
  const router = Router();
  const drain = drainState(config);
  router.get('/meta', (_req, res) => {
    res.json({ product: 'Holdpoint', demo: config.NODE_ENV !== 'production' });
  });
  router.get('/health', async (_req, res) => {
    if ((await reachable(() => sequelize.query('SELECT 1'))) === 'up') res.json({ status: 'ok', db: 'up' });
    else res.status(503).json({ status: 'degraded', db: 'down', error: { code: 'service_unavailable', message: 'The database is not reachable right now.', details: [] } });
  });
  router.get('/health/live', (_req, res) => {
    res.json({ status: 'live' });
  });
  router.get('/health/ready', async (_req, res) => {
    const [db, storage] = await Promise.all([reachable(() => sequelize.query('SELECT 1')), reachable(() => objectStorage(config).check(CHECK_MS))]);
    const draining = drain.draining;
    const body = { db, storage, draining, replica: replica?.current() ?? null };
    if (db === 'up' && storage === 'up' && !draining) {
      res.json({ status: 'ready', ...body });
      return;
    }
    const why = draining ? 'This server is shutting down.' : db === 'down' ? 'The database is not reachable right now.' : 'The file store is not reachable right now.';
    res.status(503).json({ status: 'not_ready', ...body, error: { code: 'service_unavailable', message: why, details: [] } });
  });
  return router;
}
