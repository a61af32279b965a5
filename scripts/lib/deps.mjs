// Runs `npm ci` when node_modules is missing or older than package-lock.json.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { mtime } from './pg.mjs';

export function ensureNodeModules(root) {
  const marker = join(root, 'node_modules', '.package-lock.json');
  const lock = join(root, 'package-lock.json');
  if (existsSync(marker) && mtime(marker) >= mtime(lock)) return;
  console.log('[bootstrap] npm ci');
  const r = spawnSync('npm', ['ci', '--no-audit', '--no-fund'], { cwd: root, stdio: 'inherit' });
  if (r.status !== 0) throw new Error('npm ci failed');
}
