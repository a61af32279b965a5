import { createServer } from 'node:http';
import { loadConfig, ConfigError } from './config/env';
import { createLogger } from './lib/logger';
import { createPgPool, createSequelize } from './db/sequelize';
import { migrateUp } from './db/migrator';
import { createTransport } from './lib/mailer';
import { systemClock } from './lib/clock';
import { createApp } from './app';
// Type only: the mailbox and its SMTP catcher (a development package) load on demand below, never in production.
import type { DevMailbox } from './modules/dev-mail/dev-mailbox';
import { startWorkers } from './workers';
import type { AppDeps } from './deps';
import { closeChangeFeed } from './lib/change-feed';

async function main() {
  let config;
  try {
    config = loadConfig();
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message);
      process.exit(2);
    }
    throw err;
  }
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
  if (config.DATABASE_OWNER_URL) {
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
  const app = createApp(deps, { devMailbox });
  const server = createServer(app);
  const workers = config.WORKERS === 'on' ? startWorkers(deps) : null;
  server.listen(config.PORT, config.HOST, () => {
    const addr = server.address();
    const port = typeof addr === 'object' && addr ? addr.port : config.PORT;
    logger.info({ url: `http://${config.HOST}:${port}` }, 'Holdpoint is listening');
  });
  const shutdown = async (signal: string) => {
    logger.info({ signal }, 'shutting down');
    workers?.stop();
    server.close();
    server.closeAllConnections?.();
    await closeChangeFeed(deps);
    await devMailbox?.stop();
    await deps.pgPool.end().catch(() => undefined);
    await sequelize.close().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGINT', () => void shutdown('SIGINT'));
  process.on('SIGTERM', () => void shutdown('SIGTERM'));
  process.on('unhandledRejection', (err) => logger.error({ err }, 'unhandled rejection'));
}

void main();
