// Issue 20 finding 5: a production server is told what it needs, never guesses it. A secret generated
// per machine would sign sessions no other machine accepts; a missing SMTP_URL would drop mail silently;
// without a bucket, uploads would stay on one machine.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { generateKeyPairSync } from 'node:crypto';
import { ConfigError, loadConfig } from '../../server/src/config/env';

const root = fileURLToPath(new URL('../..', import.meta.url));
const base = { DATABASE_URL: 'postgres://holdpoint@127.0.0.1:5432/holdpoint', DATA_DIR: '.tmp/unit-config' };
const complete = {
  ...base,
  NODE_ENV: 'production',
  SESSION_SECRET: 'production-secret-0123456789',
  PUBLIC_URL: 'https://permits.example',
  SMTP_URL: 'smtp://mail.example:587',
  S3_URL: 'https://s3.example',
  S3_BUCKET: 'holdpoint-permits',
  AUDIT_SIGNING_KEY: generateKeyPairSync('ed25519').privateKey.export({ type: 'pkcs8', format: 'pem' }).toString(),
};

describe('issue 20 finding 5: production settings', () => {
  it('when production has every setting, then the configuration loads with them', () => {
    const config = loadConfig(complete);
    expect(config).toMatchObject({ SESSION_SECRET: complete.SESSION_SECRET, PUBLIC_URL: complete.PUBLIC_URL, SMTP_URL: complete.SMTP_URL, S3_URL: complete.S3_URL, S3_BUCKET: 'holdpoint-permits' });
  });

  it.each(['SESSION_SECRET', 'PUBLIC_URL', 'SMTP_URL', 'S3_URL', 'AUDIT_SIGNING_KEY'] as const)('when production lacks %s, then loading refuses with a message naming it', (name) => {
    const { [name]: _left, ...without } = complete;
    expect(() => loadConfig(without)).toThrow(ConfigError);
    expect(() => loadConfig(without)).toThrow(new RegExp(`${name}: required in production`));
  });

  it('when only one of the two storage credentials is given, then loading refuses, in any mode', () => {
    expect(() => loadConfig({ ...complete, S3_ACCESS_KEY_ID: 'key-id' })).toThrow(/S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY: give both or neither/);
    expect(() => loadConfig({ ...base, S3_SECRET_ACCESS_KEY: 'secret' })).toThrow(ConfigError);
  });

  it('when development lacks them, then the local address is used and uploads stay in a folder', () => {
    const config = loadConfig({ ...base, SESSION_SECRET: 'development-secret-0123456789' });
    expect(config.PUBLIC_URL).toBe('http://127.0.0.1:3000');
    expect(config.S3_URL).toBeUndefined();
  });

  it('when the production server starts without SMTP_URL and storage, then it says so and exits with code 1', () => {
    const { SMTP_URL: _s, S3_URL: _u, ...env } = process.env;
    const run = spawnSync(process.execPath, ['--import', 'tsx', 'server/src/index.ts'], {
      cwd: root,
      env: { ...env, ...base, NODE_ENV: 'production', SESSION_SECRET: complete.SESSION_SECRET, PUBLIC_URL: complete.PUBLIC_URL },
      encoding: 'utf8',
      timeout: 30_000,
    });
    expect(run.status).toBe(1);
    expect(run.stderr).toContain('SMTP_URL: required in production');
    expect(run.stderr).toContain('S3_URL: required in production');
  }, 40_000);
});
