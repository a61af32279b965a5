// GET /api/health — anyone; 200 when a real query succeeds, 503 when the database is down.
// GET /api/meta   — anyone; whether this is a demo server (the sign-in page lists demo accounts then).
import { Router } from 'express';
import type { AppDeps } from '../../deps';

export function createHealthRouter({ sequelize, config }: AppDeps) {
  const router = Router();
  router.get('/meta', (_req, res) => {
    res.json({ product: 'Holdpoint', demo: config.NODE_ENV !== 'production' });
  });
  router.get('/health', async (_req, res) => {
    try {
      await Promise.race([
        sequelize.query('SELECT 1'),
        new Promise((_, reject) => setTimeout(() => reject(new Error('timeout')), 3_000)),
      ]);
      res.json({ status: 'ok', db: 'up' });
    } catch {
      res.status(503).json({ status: 'degraded', db: 'down', error: { code: 'service_unavailable', message: 'The database is not reachable right now.', details: [] } });
    }
  });
  return router;
}
