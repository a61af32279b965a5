import type { Sequelize } from 'sequelize';
import type { Logger } from 'pino';
import type { Transporter } from 'nodemailer';
import type pg from 'pg';
import type { Config } from './config/env';
import type { Clock } from './lib/clock';
import type { ReadReplica } from './lib/read-replica';

/** Everything a module needs, built once in index.ts (or by a test) and passed down. */
export interface AppDeps {
  config: Config;
  sequelize: Sequelize;
  pgPool: pg.Pool;
  logger: Logger;
  mailTransport: Transporter | null;
  clock: Clock;
  /** The hot standby for reads that tolerate a little lag (DATABASE_REPLICA_URL); absent: every read goes to the primary. */
  replica?: ReadReplica | null;
}
