// pg_dump / pg_restore of one database over 127.0.0.1, as the role that owns it.
import { execFileSync } from 'node:child_process';
import { ensurePostgres } from './pg.mjs';
import { join } from 'node:path';

function split(url) {
  const u = new URL(url);
  return {
    env: { ...process.env, PGPASSWORD: decodeURIComponent(u.password) },
    args: ['-h', u.hostname, '-p', u.port || '5432', '-U', decodeURIComponent(u.username), '-d', u.pathname.slice(1)],
  };
}

/** Writes a custom-format dump (compressed, restorable table by table). */
export function dumpDatabase(url, file) {
  const bin = ensurePostgres();
  const { env, args } = split(url);
  execFileSync(join(bin, 'pg_dump'), [...args, '--format=custom', '--no-owner', '--file', file], { env, stdio: ['ignore', 'inherit', 'inherit'] });
}

/** Restores a dump into an empty database; one transaction, so a failed restore leaves nothing half-loaded. */
export function restoreDatabase(url, file) {
  const bin = ensurePostgres();
  const { env, args } = split(url);
  execFileSync(join(bin, 'pg_restore'), [...args, '--no-owner', '--single-transaction', '--exit-on-error', file], { env, stdio: ['ignore', 'inherit', 'inherit'] });
}
