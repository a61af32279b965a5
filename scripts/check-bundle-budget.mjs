// JavaScript budgets of the client, read from Vite's build manifest (run after `vite build`; `npm test`
// runs it as its own stage right after the build):
// - the sign-in page: the entry, everything it imports statically and the sign-in chunk, at most 150 KB gzip;
// - every lazily loaded route: the same with its own chunk, at most 300 KB gzip; a screen inside the signed-in
//   shell also counts the shell (app/layout.tsx and its imports), which it always loads with it. The shell and
//   the start page share one chunk of code (vite.config.ts), which other screens import for the pieces they
//   share with it: counted without the shell they would seem to grow by that chunk, though they load it anyway.
// - the report page's charting library: a chunk of its own that no other screen loads, at most 130 KB gzip
//   beyond what the report page has loaded already, and the page with its charts within the route budget.
// Sizes are gzip at zlib's default level, the way a server compresses on the fly.
// It also checks what goes on the wire: no chunk carries React's development build, every text asset has
// its brotli and gzip file beside it, and the service worker's precache stays within its budget.
// CLIENT_DIST points it at another build folder (the server reads the same variable).
import { existsSync, readdirSync, readFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { developmentMarkers } from './lib/development-build.mjs';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dist = resolve(root, process.env.CLIENT_DIST ?? join('dist', 'client'));
const manifestFile = join(dist, '.vite', 'manifest.json');
const KB = 1024;
const budgets = {
  signIn: Number(process.env.BUDGET_SIGN_IN_KB ?? 150) * KB,
  route: Number(process.env.BUDGET_ROUTE_KB ?? 300) * KB,
  precache: Number(process.env.BUDGET_PRECACHE_KB ?? 800) * KB,
  charts: Number(process.env.BUDGET_CHARTS_KB ?? 130) * KB,
};
const signInSource = 'src/features/auth/pages/sign-in.tsx';

if (!existsSync(manifestFile)) {
  console.error(`No build manifest at ${manifestFile.slice(root.length + 1)}: run \`npx vite build\` first.`);
  console.log('0 passed, 1 failed');
  process.exit(1);
}
const manifest = JSON.parse(readFileSync(manifestFile, 'utf8'));
const gzipped = new Map();
const sizeOf = (file) => {
  if (!gzipped.has(file)) gzipped.set(file, gzipSync(readFileSync(join(dist, file))).length);
  return gzipped.get(file);
};

/** The JavaScript files a chunk loads before it runs: itself and its static imports, transitively. */
function closure(key, into = new Set()) {
  const chunk = manifest[key];
  if (!chunk || into.has(chunk.file)) return into;
  into.add(chunk.file);
  for (const imported of chunk.imports ?? []) closure(imported, into);
  return into;
}
const total = (files) => [...files].filter((f) => f.endsWith('.js')).reduce((n, f) => n + sizeOf(f), 0);

const entryKey = Object.keys(manifest).find((k) => manifest[k].isEntry);
const entry = closure(entryKey);
const routes = Object.keys(manifest).filter((k) => manifest[k].isDynamicEntry);
let passed = 0;
let failed = 0;
const line = (ok, name, bytes, budget, files = new Set()) => {
  if (ok) passed++;
  else failed++;
  console.log(`  ${ok ? 'PASS' : 'FAIL'}  ${name.padEnd(64)} ${(bytes / KB).toFixed(1).padStart(7)} KB gzip  (budget ${(budget / KB).toFixed(0)} KB)`);
  // Over budget: what it loads beyond the entry, largest first.
  if (!ok)
    for (const f of [...files].filter((x) => x.endsWith('.js') && !entry.has(x)).sort((x, y) => sizeOf(y) - sizeOf(x)))
      console.log(`          ${f.padEnd(58)} ${(sizeOf(f) / KB).toFixed(1).padStart(7)} KB`);
};

console.log(`Entry ${entryKey}: ${(total(entry) / KB).toFixed(1)} KB gzip of JavaScript before any route`);
if (!manifest[signInSource]) {
  failed++;
  console.log(`  FAIL  the sign-in page (${signInSource}) is not a chunk of its own`);
} else {
  const signIn = closure(signInSource, new Set(entry));
  line(total(signIn) <= budgets.signIn, `sign-in: entry + its imports + ${signInSource}`, total(signIn), budgets.signIn, signIn);
}
const shellSource = 'src/app/layout.tsx';
const insideShell = (key) => key !== shellSource && /^src\/(app\/routes|features\/[^/]+\/pages)\//.test(key) && !key.startsWith('src/features/auth/');
for (const key of routes.sort()) {
  const files = closure(key, insideShell(key) ? closure(shellSource, new Set(entry)) : new Set(entry));
  line(total(files) <= budgets.route, key, total(files), budgets.route, files);
}

// The report page's charting library: its own chunk, loaded by no screen but the report page (after the page
// itself, so the tables show first), at most the charts budget beyond what the page has loaded already.
const chartsSource = 'src/features/reports/components/report-chart.tsx';
const reportsSource = 'src/features/reports/pages/reports-page.tsx';
if (!manifest[chartsSource] || !manifest[reportsSource]) {
  failed++;
  console.log(`  FAIL  the report page's charts (${chartsSource}) are not a chunk of their own`);
} else {
  const page = closure(reportsSource, closure(shellSource, new Set(entry)));
  const charts = [...closure(chartsSource)].filter((f) => !page.has(f));
  const chartsFile = manifest[chartsSource].file;
  const elsewhere = routes.filter((k) => k !== chartsSource && closure(k).has(chartsFile));
  line(total(charts) <= budgets.charts && !elsewhere.length, `the report page's charts, loaded only there (${chartsSource})`, total(charts), budgets.charts, new Set(charts));
  for (const k of elsewhere) console.log(`          also loaded by ${k}`);
  const whole = new Set([...page, ...charts]);
  line(total(whole) <= budgets.route, `the report page with its charts drawn (${reportsSource} and the charts)`, total(whole), budgets.route, whole);
}

// What goes on the wire besides the budgets above.
const check = (ok, name, why = []) => {
  if (ok) passed++;
  else failed++;
  console.log(`  ${ok ? 'PASS' : 'FAIL'}  ${name}`);
  for (const w of why.slice(0, 10)) console.log(`          ${w}`);
};
// The first visit to the start page ("My work") on a slow link: index.html asks for every script the signed-in
// shell and the start page need, so none of them waits for the entry to run first (docs/performance.md).
{
  const html = readFileSync(join(dist, 'index.html'), 'utf8');
  const asked = new Set([...html.matchAll(/<(?:script|link)[^>]*(?:src|href)="\/([^"]+\.js)"/g)].map((m) => m[1]));
  const startPath = new Set(entry);
  for (const key of ['src/app/layout.tsx', 'src/app/routes/overview.tsx']) closure(key, startPath);
  const waiting = [...startPath].filter((f) => !asked.has(f));
  check(waiting.length === 0, `index.html asks at once for the ${startPath.size} scripts of the start page (${(total(startPath) / KB).toFixed(1)} KB gzip)`, waiting);
}
const builtFiles = (dir, prefix = '') =>
  readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.name.startsWith('.') ? [] : e.isDirectory() ? builtFiles(join(dir, e.name), `${prefix}${e.name}/`) : [`${prefix}${e.name}`]));
const files = builtFiles(dist);
const scripts = files.filter((f) => f.endsWith('.js'));
const devChunks = scripts.flatMap((f) => developmentMarkers(readFileSync(join(dist, f), 'utf8')).map((m) => `${f}: ${m}`));
check(devChunks.length === 0, `no chunk carries React's development build (${scripts.length} chunks read)`, devChunks);
// Files under 1 KB may be left uncompressed (the plugin skips a file that would not get smaller).
const uncompressed = files
  .filter((f) => f.startsWith('assets/') && /\.(js|css)$/.test(f) && readFileSync(join(dist, f)).length >= KB)
  .filter((f) => !files.includes(`${f}.br`) || !files.includes(`${f}.gz`));
check(uncompressed.length === 0, 'every script and style sheet has its brotli (.br) and gzip (.gz) file', uncompressed);
const sw = join(dist, 'sw.js');
if (!existsSync(sw)) check(false, 'the service worker (sw.js) is built');
else {
  const precached = [...readFileSync(sw, 'utf8').matchAll(/url:"([^"]+)"/g)].map((m) => m[1].replace(/^\//, ''));
  const missing = precached.filter((f) => !existsSync(join(dist, f)));
  const wire = precached.filter((f) => !missing.includes(f)).reduce((n, f) => n + sizeOf(f), 0);
  check(missing.length === 0 && precached.some((f) => f.startsWith('assets/index-')), `the service worker precaches ${precached.length} files of this build`, missing);
  line(wire <= budgets.precache, `the service worker's precache (everything it keeps, as sent)`, wire, budgets.precache);
}
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed ? 1 : 0);
