// Installs Debian packages that are missing. Runs `apt-get update` once per process.
import { spawnSync } from 'node:child_process';

let updated = false;

export function missingAptPackages(names) {
  return names.filter((n) => {
    const r = spawnSync('dpkg-query', ['-W', '-f=${Status}', n]);
    return r.status !== 0 || !r.stdout.toString().includes('install ok installed');
  });
}

export function ensureAptPackages(names) {
  const missing = missingAptPackages(names);
  if (missing.length === 0) return;
  if (process.getuid && process.getuid() !== 0) {
    throw new Error(`Missing Debian packages: ${missing.join(', ')}. Install them as root (apt-get install -y ${missing.join(' ')}).`);
  }
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  if (!updated) {
    console.log('[bootstrap] apt-get update');
    const u = spawnSync('apt-get', ['update', '-qq'], { stdio: 'inherit', env });
    if (u.status !== 0) throw new Error('apt-get update failed');
    updated = true;
  }
  console.log(`[bootstrap] apt-get install ${missing.join(' ')}`);
  const r = spawnSync('apt-get', ['install', '-y', '-qq', ...missing], { stdio: 'inherit', env });
  if (r.status !== 0) throw new Error(`apt-get install ${missing.join(' ')} failed`);
}
