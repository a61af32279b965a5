import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { randomBytes } from 'node:crypto';
import { isIP } from 'node:net';
import { z } from 'zod';

const proxyNames = ['loopback', 'linklocal', 'uniquelocal'];

/** One entry of Express's 'trust proxy' list: a named range, an address, or a subnet (address/prefix length). */
function isProxyEntry(entry: string): boolean {
  if (proxyNames.includes(entry)) return true;
  const [address, prefix, ...rest] = entry.split('/');
  const family = isIP(address);
  if (!family || rest.length) return false;
  if (prefix === undefined) return true;
  return /^\d{1,3}$/.test(prefix) && Number(prefix) <= (family === 4 ? 32 : 128);
}

// Only the proxies named here may say who the client is (X-Forwarded-For); nobody by default.
const trustProxySchema = z
  .string()
  .default('')
  .transform((v) => v.split(',').map((s) => s.trim()).filter(Boolean))
  .refine((list) => list.every(isProxyEntry), {
    message: 'TRUST_PROXY must list proxy addresses or subnets separated by commas, such as "127.0.0.1", "10.0.0.0/8" or "loopback"',
  });

const envSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  PORT: z.coerce.number().int().min(0).max(65535).default(3000),
  HOST: z.string().default('127.0.0.1'),
  DATABASE_URL: z.url({ message: 'DATABASE_URL must be a postgres:// URL' }).refine((u) => u.startsWith('postgres'), 'DATABASE_URL must be a postgres:// URL'),
  // Migrations run as the owner of the schema; the server itself uses DATABASE_URL (a role bound by row-level security).
  DATABASE_OWNER_URL: z.string().regex(/^postgres(ql)?:\/\//, 'DATABASE_OWNER_URL must be a postgres:// URL').optional(),
  DATA_DIR: z.string().default('.data'),
  SESSION_SECRET: z.string().min(16, 'SESSION_SECRET must be at least 16 characters').optional(),
  SESSION_IDLE_MINUTES: z.coerce.number().int().positive().default(30),
  SESSION_ABSOLUTE_HOURS: z.coerce.number().positive().default(12),
  /** Sign-in and token requests per network address per 15 minutes (a site office behind one address may need more). */
  SIGN_IN_LIMIT_PER_IP: z.coerce.number().int().min(1).max(100_000).default(100),
  SMTP_URL: z.string().regex(/^smtps?:\/\//, 'SMTP_URL must start with smtp:// or smtps://').optional(),
  MAIL_FROM: z.string().default('Holdpoint <no-reply@holdpoint.example>'),
  DEV_MAILBOX: z.enum(['on', 'off']).default('off'),
  PUBLIC_URL: z.string().optional(),
  UPLOAD_DIR: z.string().optional(),
  UPLOAD_MAX_BYTES: z.coerce.number().int().positive().default(10 * 1024 * 1024),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  CLIENT_DIST: z.string().default('dist/client'),
  WORKERS: z.enum(['on', 'off']).default('on'),
  // Server processes sharing the port (node:cluster): "auto" is one per core; 1 runs no cluster.
  SERVER_PROCESSES: z.union([z.literal('auto'), z.coerce.number().int().min(1).max(64)]).default(1),
  // The live board reuses its answer while the tenant's data is unchanged (modules/isolations/board-cache.ts).
  BOARD_CACHE: z.enum(['on', 'off']).default('on'),
  TRUST_PROXY: trustProxySchema,
});

export type Env = z.infer<typeof envSchema>;
export type Config = Omit<Env, 'SESSION_SECRET' | 'UPLOAD_DIR' | 'PUBLIC_URL'> & {
  SESSION_SECRET: string;
  UPLOAD_DIR: string;
  PUBLIC_URL: string;
};

export class ConfigError extends Error {}

/** Reads and validates the environment once; a bad variable stops the process with a message per variable. */
export function loadConfig(source: NodeJS.ProcessEnv = process.env): Config {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new ConfigError(`Invalid configuration:\n${lines.join('\n')}`);
  }
  const env = parsed.data;
  const dataDir = resolve(env.DATA_DIR);
  return {
    ...env,
    DATA_DIR: dataDir,
    SESSION_SECRET: env.SESSION_SECRET ?? keptSecret(dataDir, 'session-secret'),
    UPLOAD_DIR: resolve(env.UPLOAD_DIR ?? join(dataDir, 'uploads')),
    PUBLIC_URL: env.PUBLIC_URL ?? `http://${env.HOST}:${env.PORT}`,
  };
}

function keptSecret(dir: string, name: string): string {
  const file = join(dir, name);
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dir, { recursive: true });
  const secret = randomBytes(32).toString('base64url');
  writeFileSync(file, `${secret}\n`, { mode: 0o600 });
  return secret;
}
