// `npm test`: bootstraps what is missing, then type-check, lint, unit + API tests (Vitest, real
// PostgreSQL), the production build, the client's bundle budgets and the browser tests (Playwright on
// Debian's Chromium).
// Prints one closing line "N passed, N failed" summed over every runner.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureNodeModules } from './lib/deps.mjs';
import { ensureAptPackages } from './lib/apt.mjs';
import { ensurePostgres } from './lib/pg.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const out = join(root, '.tmp', 'test-results');
const only = process.argv.slice(2); // e.g. `npm test -- unit api` runs just those stages

let passed = 0;
let failed = 0;
const failures = [];

function stage(name, fn) {
  if (only.length && !only.includes(name)) return;
  const started = Date.now();
  console.log(`\n=== ${name}`);
  try {
    const r = fn();
    passed += r.passed;
    failed += r.failed;
    if (r.failed) failures.push(`${name}: ${r.failed} failed`);
    console.log(`--- ${name}: ${r.passed} passed, ${r.failed} failed (${((Date.now() - started) / 1000).toFixed(1)} s)`);
  } catch (err) {
    failed += 1;
    failures.push(`${name}: ${err.message}`);
    console.log(`--- ${name}: error: ${err.message}`);
  }
}

const run = (cmd, args, env = {}) => spawnSync(cmd, args, { cwd: root, stdio: 'inherit', env: { ...process.env, ...env } });
const check = (cmd, args) => (run(cmd, args).status === 0 ? { passed: 1, failed: 0 } : { passed: 0, failed: 1 });

function vitestCounts(file) {
  if (!existsSync(file)) throw new Error('Vitest wrote no report');
  const report = JSON.parse(readFileSync(file, 'utf8'));
  // A file that failed to load counts as a failure even though it has no tests.
  const brokenFiles = (report.testResults ?? []).filter((f) => f.status === 'failed' && (f.assertionResults ?? []).length === 0).length;
  return { passed: report.numPassedTests ?? 0, failed: (report.numFailedTests ?? 0) + brokenFiles };
}

function playwrightCounts(file) {
  if (!existsSync(file)) throw new Error('Playwright wrote no report');
  const report = JSON.parse(readFileSync(file, 'utf8'));
  const s = report.stats ?? {};
  return { passed: (s.expected ?? 0) + (s.flaky ?? 0), failed: (s.unexpected ?? 0) + (report.errors?.length ?? 0) };
}

try {
  ensureNodeModules(root);
  ensurePostgres();
  ensureAptPackages(['chromium', 'python3-fluids', 'poppler-utils']);
} catch (err) {
  console.error(`[test] bootstrap failed: ${err.message}`);
  console.log('0 passed, 1 failed');
  process.exit(1);
}
rmSync(out, { recursive: true, force: true });
mkdirSync(out, { recursive: true });

stage('typecheck', () => check('npx', ['tsc', '--noEmit', '-p', '.']));
stage('lint', () => check('npx', ['eslint', '--max-warnings=0', '.']));
stage('unit', () => {
  const file = join(out, 'unit.json');
  run('npx', ['vitest', 'run', '--project', 'unit', '--reporter=default', '--reporter=json', `--outputFile.json=${file}`]);
  return vitestCounts(file);
});
stage('api', () => {
  const file = join(out, 'api.json');
  run('npx', ['vitest', 'run', '--project', 'api', '--reporter=default', '--reporter=json', `--outputFile.json=${file}`]);
  return vitestCounts(file);
});
stage('build', () => check('npx', ['vite', 'build', '--logLevel', 'warn']));
// The client's JavaScript budgets, read from the manifest of the build above (`npm test -- bundle` on its own
// needs a build in dist/): each PASS/FAIL line of the script counts, as summed on its closing line.
stage('bundle', () => {
  const r = spawnSync('node', ['scripts/check-bundle-budget.mjs'], { cwd: root, encoding: 'utf8' });
  process.stdout.write(r.stdout ?? '');
  process.stderr.write(r.stderr ?? '');
  const counts = /^(\d+) passed, (\d+) failed\s*$/m.exec(r.stdout ?? '');
  if (!counts) throw new Error(`the budget script printed no counts (exit ${r.status})`);
  const result = { passed: Number(counts[1]), failed: Number(counts[2]) };
  if (r.status !== 0 && !result.failed) result.failed = 1;
  return result;
});
stage('e2e', () => {
  const file = join(out, 'e2e.json');
  run('npx', ['playwright', 'test'], { PLAYWRIGHT_JSON_OUTPUT_NAME: file });
  return playwrightCounts(file);
});
// The several-process shape on loopback (HAProxy, PgBouncer, a hot standby, three server processes):
// scripts/test-cluster.mjs starts it on spare ports, runs tests/cluster and stops it (docs/scaling.md).
stage('cluster', () => {
  const file = join(out, 'cluster.json');
  run('node', ['scripts/test-cluster.mjs', '--reporter=default', '--reporter=json', `--outputFile.json=${file}`]);
  return vitestCounts(file);
});

if (failures.length) console.log(`\nFailures:\n  ${failures.join('\n  ')}`);
console.log(`\n${passed} passed, ${failed} failed`);
process.exit(failed ? 1 : 0);
