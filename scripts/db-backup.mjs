// `npm run db:backup [file]`: dumps the demo database of `npm start` to .data/backups/ (or the given file).
// `npm run db:restore <file>`: replaces the demo database with a dump (stop the server first).
import { mkdirSync, existsSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureRoleAndDatabase, keptSecret, startCluster } from './lib/pg.mjs';
import { dumpDatabase, restoreDatabase } from './lib/backup.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dataDir = join(root, '.data');
const [mode, fileArg] = process.argv.slice(2);
const cluster = startCluster({ root: join(dataDir, 'pg'), port: Number(process.env.PGPORT ?? 54329) });
const password = keptSecret(join(dataDir, 'db-password'));
const url = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password, database: 'holdpoint' });

if (mode === 'backup') {
  const dir = join(dataDir, 'backups');
  mkdirSync(dir, { recursive: true });
  const file = resolve(fileArg ?? join(dir, `holdpoint-${new Date().toISOString().replace(/[:.]/g, '-')}.dump`));
  dumpDatabase(url, file);
  console.log(`Backup written to ${file}`);
} else if (mode === 'restore') {
  if (!fileArg || !existsSync(fileArg)) {
    console.error('usage: npm run db:restore -- <file.dump>');
    process.exit(2);
  }
  cluster.psql(`SELECT pg_terminate_backend(pid) FROM pg_stat_activity WHERE datname = 'holdpoint' AND pid <> pg_backend_pid();`);
  cluster.psql(`DROP DATABASE IF EXISTS holdpoint;`);
  const fresh = ensureRoleAndDatabase(cluster, { role: 'holdpoint', password, database: 'holdpoint' });
  restoreDatabase(fresh, resolve(fileArg));
  console.log(`Restored ${fileArg} into the demo database.`);
} else {
  console.error('usage: node scripts/db-backup.mjs backup [file] | restore <file>');
  process.exit(2);
}
