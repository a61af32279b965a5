import { createServer } from 'node:http';
import cluster from 'node:cluster';
import { availableParallelism } from 'node:os';
import { loadConfig, ConfigError, type Config } from './config/env';
import { createLogger } from './lib/logger';
import { createPgPool, createReplicaSequelize, createSequelize } from './db/sequelize';
import { migrateUp } from './db/migrator';
import { systemClock } from './lib/clock';
import { drainState } from './lib/draining';
import { RestartBackoff } from './lib/restart-backoff';
// Type only: the mailbox and its SMTP catcher (a development package) load on demand below, never in production.
import type { DevMailbox } from './modules/dev-mail/dev-mailbox';
import type { AppDeps } from './deps';

/** How long a stopping process waits for requests in flight and the worker round before it exits anyway. */
const SHUTDOWN_MS = 20_000;

function configOrExit() {
  try {
    return loadConfig();
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message);
      process.exit(1);
    }
    throw err;
  }
}

/**
 * SERVER_PROCESSES=auto (or a number): a primary runs the migrations once (under their advisory lock,
 * like `npm run db:migrate`), then one server process per core, which share the port (node:cluster)
 * and nothing in memory that another would need (sessions, attempt counters, uploads and the board's
 * version are in PostgreSQL or the bucket). A process that dies is started again. Still per process:
 * the development mailbox (so with DEV_MAILBOX=on one process runs). Restarts back off (lib/restart-backoff.ts):
 * a process that fails at start is started again ever more slowly, not in a tight loop.
 */
async function primary(config: Config, processes: number) {
  const logger = createLogger(config.LOG_LEVEL);
  const owner = createSequelize(config.DATABASE_OWNER_URL ?? config.DATABASE_URL, logger);
  await migrateUp(owner);
  await owner.close();
  let stopping = false;
  const backoffs = new Map<number, RestartBackoff>();
  const fork = (index: number) => {
    const backoff = backoffs.get(index) ?? new RestartBackoff();
    backoffs.set(index, backoff);
    backoff.started(Date.now());
    // Every process runs the background loops; each round is elected by an advisory lock (workers.ts).
    const worker = cluster.fork({ HP_MIGRATED: '1', WORKERS: config.WORKERS });
    worker.on('exit', (code, signal) => {
      if (stopping) return;
      const delayMs = backoff.ended(Date.now());
      logger.warn({ code, signal, index, delayMs }, `a server process ended; starting another in ${delayMs / 1000} s`);
      setTimeout(() => {
        if (!stopping) fork(index);
      }, delayMs);
    });
  };
  for (let i = 0; i < processes; i++) fork(i);
  logger.info({ processes }, 'server processes started');
  const stop = () => {
    stopping = true;
    for (const w of Object.values(cluster.workers ?? {})) w?.process.kill('SIGTERM');
    const check = setInterval(() => {
      if (!Object.keys(cluster.workers ?? {}).length) {
        clearInterval(check);
        process.exit(0);
      }
    }, 50);
  };
  process.on('SIGINT', stop);
  process.on('SIGTERM', stop);
}

async function main(config: Config) {
  // Loaded here, not at the top: a cluster's primary only migrates and needs none of it.
  const [{ createApp }, { createTransport }, { startWorkers }, { closeChangeFeed }] = await Promise.all([
    import('./app'),
    import('./lib/mailer'),
    import('./workers'),
    import('./lib/change-feed'),
  ]);
  const logger = createLogger(config.LOG_LEVEL);
  let devMailbox: DevMailbox | null = null;
  let smtpUrl = config.SMTP_URL;
  if (config.DEV_MAILBOX === 'on' && config.NODE_ENV === 'production') {
    logger.warn('DEV_MAILBOX=on is ignored in production: mail goes out through SMTP_URL');
  } else if (config.DEV_MAILBOX === 'on') {
    const { startDevMailbox } = await import('./modules/dev-mail/dev-mailbox');
    devMailbox = await startDevMailbox(0);
    smtpUrl = `smtp://127.0.0.1:${devMailbox.port}`;
    logger.warn({ path: '/dev/mail' }, 'development mailbox is on (DEV_MAILBOX=on): mail is kept in memory, not sent; signed-in people read their own mail at /dev/mail');
  }
  const sequelize = createSequelize(config.DATABASE_URL, logger);
  if (process.env.HP_MIGRATED === '1') {
    // The cluster's primary has migrated.
  } else if (config.DATABASE_OWNER_URL) {
    const owner = createSequelize(config.DATABASE_OWNER_URL, logger);
    await migrateUp(owner);
    await owner.close();
  } else {
    await migrateUp(sequelize);
  }
  const deps: AppDeps = {
    config,
    sequelize,
    pgPool: createPgPool(config.DATABASE_URL, logger),
    logger,
    mailTransport: createTransport(smtpUrl),
    clock: systemClock,
  };
  if (config.DATABASE_REPLICA_URL) {
    const { ReadReplica } = await import('./lib/read-replica');
    deps.replica = new ReadReplica(createReplicaSequelize(config.DATABASE_REPLICA_URL, logger), sequelize, logger, config.REPLICA_MAX_LAG_MS);
    deps.replica.start(deps);
  }
  const app = createApp(deps, { devMailbox });
  // Loads the storage client now rather than in the first request, and says at once when the bucket is not there.
  if (config.S3_URL) {
    const { objectStorage } = await import('./lib/storage');
    objectStorage(config)
      .check(10_000)
      .catch((err: Error) => logger.error({ err: err.message, bucket: config.S3_BUCKET }, 'the upload bucket is not reachable; readiness answers 503 until it is'));
  }
  const server = createServer(app);
  const workers = config.WORKERS === 'on' ? startWorkers(deps) : null;
  server.listen(config.PORT, config.HOST, () => {
    const addr = server.address();
    const port = typeof addr === 'object' && addr ? addr.port : config.PORT;
    logger.info({ url: `http://${config.HOST}:${port}` }, 'Holdpoint is listening');
  });
  const drain = drainState(config);
  let stopping = false;
  /**
   * A clean stop: readiness answers 503 at once (draining), event streams end with a retry hint, the
   * listening socket closes (new connections are refused), requests in flight are answered, the
   * worker loops finish their round; then the process exits 0. Past SHUTDOWN_MS it exits 1 anyway.
   */
  const shutdown = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    logger.info({ signal }, 'shutting down: finishing the requests in flight');
    setTimeout(() => {
      logger.error({ afterMs: SHUTDOWN_MS }, 'requests still in flight at the shutdown limit; exiting');
      process.exit(1);
    }, SHUTDOWN_MS).unref();
    drain.start();
    const closed = new Promise<void>((resolve) => server.close(() => resolve()));
    // Kept-alive connections with nothing in flight would hold the close open: end them as they go idle.
    const idle = setInterval(() => server.closeIdleConnections(), 100);
    server.closeIdleConnections();
    await Promise.all([closed, workers?.stop()]);
    clearInterval(idle);
    await closeChangeFeed(deps);
    await devMailbox?.stop();
    await deps.pgPool.end().catch(() => undefined);
    await deps.replica?.close();
    await sequelize.close().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void shutdown('SIGINT'));
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('unhandledRejection', (err) => logger.error({ err }, 'unhandled rejection'));
}

const config = configOrExit();
const processes = config.SERVER_PROCESSES === 'auto' ? availableParallelism() : config.SERVER_PROCESSES;
if (cluster.isPrimary && processes > 1 && config.DEV_MAILBOX === 'on' && config.NODE_ENV !== 'production') {
  console.warn('[server] the development mailbox keeps mail in one process: running one server process');
  void main(config);
} else if (cluster.isPrimary && processes > 1) void primary(config, processes);
else void main(config);
