import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { createPrivateKey, generateKeyPairSync, randomBytes } from 'node:crypto';
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
  // A hot standby for reads that tolerate a little lag (board, lists, audit log), as the app role; unset: all reads on the primary.
  DATABASE_REPLICA_URL: z.string().regex(/^postgres(ql)?:\/\//, 'DATABASE_REPLICA_URL must be a postgres:// URL').optional(),
  // Reads go to the primary while the standby is further behind than this (milliseconds).
  REPLICA_MAX_LAG_MS: z.coerce.number().int().min(0).max(600_000).default(2_000),
  // The primary itself, not through a transaction pooler: the LISTEN connection needs a session of its own. Unset: DATABASE_URL.
  DATABASE_DIRECT_URL: z.string().regex(/^postgres(ql)?:\/\//, 'DATABASE_DIRECT_URL must be a postgres:// URL').optional(),
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
  // Outside production without S3_URL, uploads stay in this folder (one process only); see lib/storage.ts.
  UPLOAD_DIR: z.string().optional(),
  // The bucket every server process shares for uploads (any S3-compatible store).
  S3_URL: z.url({ message: 'S3_URL must be the http:// or https:// address of the S3 store' }).refine((u) => /^https?:\/\//.test(u), 'S3_URL must be the http:// or https:// address of the S3 store').optional(),
  S3_BUCKET: z.string().regex(/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/, 'S3_BUCKET must be a bucket name (3–63 lower-case letters, digits, dots and dashes)').default('holdpoint'),
  S3_REGION: z.string().min(1).default('us-east-1'),
  S3_ACCESS_KEY_ID: z.string().min(1).optional(),
  S3_SECRET_ACCESS_KEY: z.string().min(1).optional(),
  // Bucket in the path (http://host/bucket/key), as self-hosted stores want; "off" for bucket.host names.
  S3_PATH_STYLE: z.enum(['on', 'off']).default('on'),
  UPLOAD_MAX_BYTES: z.coerce.number().int().positive().default(10 * 1024 * 1024),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  CLIENT_DIST: z.string().default('dist/client'),
  WORKERS: z.enum(['on', 'off']).default('on'),
  // Server processes sharing the port (node:cluster): "auto" is one per core; 1 runs no cluster.
  SERVER_PROCESSES: z.union([z.literal('auto'), z.coerce.number().int().min(1).max(64)]).default(1),
  // The live board reuses its answer while the tenant's data is unchanged (modules/isolations/board-cache.ts).
  BOARD_CACHE: z.enum(['on', 'off']).default('on'),
  // The longest a request holding an Idempotency-Key may sit idle in its transaction: past it PostgreSQL
  // ends that transaction, so a key held by a process that froze or lost its machine becomes free again.
  IDEMPOTENCY_LEASE_SECONDS: z.coerce.number().int().min(1).max(600).default(30),
  TRUST_PROXY: trustProxySchema,
  // The Ed25519 private key that signs the audit checkpoints: a PEM file's path, or the PEM itself. Kept
  // out of the database on purpose (someone who can write the database must not be able to sign).
  AUDIT_SIGNING_KEY: z.string().min(1).optional(),
});

export type Env = z.infer<typeof envSchema>;
export type Config = Omit<Env, 'SESSION_SECRET' | 'UPLOAD_DIR' | 'PUBLIC_URL' | 'AUDIT_SIGNING_KEY'> & {
  SESSION_SECRET: string;
  /** The audit checkpoints' Ed25519 private key, PEM. */
  AUDIT_SIGNING_KEY: string;
  UPLOAD_DIR: string;
  PUBLIC_URL: string;
};

export class ConfigError extends Error {}

/**
 * What production must be told rather than guess: a generated secret differs per machine (a session
 * signed on one is refused on another), a missing public address breaks the links in mail, missing
 * SMTP drops mail silently and missing storage keeps uploads on one machine.
 */
function productionGaps(env: Env): string[] {
  if (env.NODE_ENV !== 'production') return [];
  const gaps: string[] = [];
  if (!env.SESSION_SECRET) gaps.push('  SESSION_SECRET: required in production (the same secret on every server process, at least 16 characters)');
  if (!env.PUBLIC_URL) gaps.push('  PUBLIC_URL: required in production (the address people open, used in the links of mail)');
  if (!env.SMTP_URL) gaps.push('  SMTP_URL: required in production (without it no mail would go out)');
  if (!env.S3_URL) gaps.push('  S3_URL: required in production (the S3 store every server process keeps uploads in)');
  if (!env.AUDIT_SIGNING_KEY) gaps.push('  AUDIT_SIGNING_KEY: required in production (the Ed25519 private key, PEM or the path of a PEM file, that signs the audit checkpoints; kept outside the database)');
  return gaps;
}

/** Reads and validates the environment once; a bad variable stops the process with a message per variable. */
export function loadConfig(source: NodeJS.ProcessEnv = process.env): Config {
  const parsed = envSchema.safeParse(source);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new ConfigError(`Invalid configuration:\n${lines.join('\n')}`);
  }
  const env = parsed.data;
  const gaps = productionGaps(env);
  if (Boolean(env.S3_ACCESS_KEY_ID) !== Boolean(env.S3_SECRET_ACCESS_KEY)) gaps.push('  S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY: give both or neither');
  if (gaps.length) throw new ConfigError(`Invalid configuration:\n${gaps.join('\n')}`);
  const dataDir = resolve(env.DATA_DIR);
  let auditSigningKey: string;
  try {
    auditSigningKey = auditSigningKeyPem(env.AUDIT_SIGNING_KEY, dataDir);
  } catch (err) {
    throw new ConfigError(`Invalid configuration:\n  AUDIT_SIGNING_KEY: ${(err as Error).message}`);
  }
  return {
    ...env,
    DATA_DIR: dataDir,
    SESSION_SECRET: env.SESSION_SECRET ?? keptSecret(dataDir, 'session-secret'),
    UPLOAD_DIR: resolve(env.UPLOAD_DIR ?? join(dataDir, 'uploads')),
    PUBLIC_URL: env.PUBLIC_URL ?? `http://${env.HOST}:${env.PORT}`,
    AUDIT_SIGNING_KEY: auditSigningKey,
  };
}

/** The given key (PEM or a file's path), checked to be an Ed25519 private key; outside production one is made and kept under the data folder when none is given. */
function auditSigningKeyPem(given: string | undefined, dataDir: string): string {
  let pem: string;
  if (given) {
    pem = given.includes('-----BEGIN') ? given.replace(/\\n/g, '\n') : readFileSync(resolve(given), 'utf8');
  } else {
    const file = join(dataDir, 'audit-signing-key.pem');
    if (!existsSync(file)) {
      mkdirSync(dataDir, { recursive: true });
      const { privateKey } = generateKeyPairSync('ed25519');
      writeFileSync(file, privateKey.export({ type: 'pkcs8', format: 'pem' }), { mode: 0o600 });
    }
    pem = readFileSync(file, 'utf8');
  }
  if (createPrivateKey(pem).asymmetricKeyType !== 'ed25519') throw new Error('must be an Ed25519 private key');
  return pem;
}

function keptSecret(dir: string, name: string): string {
  const file = join(dir, name);
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(dir, { recursive: true });
  const secret = randomBytes(32).toString('base64url');
  writeFileSync(file, `${secret}\n`, { mode: 0o600 });
  return secret;
}
