// JavaScript budgets of the client, read from Vite's build manifest (run after `vite build`; `npm test`
// runs it as its own stage right after the build):
// - the sign-in page: the entry, everything it imports statically and the sign-in chunk, at most 150 KB gzip;
// - every lazily loaded route: the same with its own chunk, at most 300 KB gzip.
// Sizes are gzip at zlib's default level, the way a server compresses on the fly.
import { existsSync, readFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '..');
const dist = join(root, 'dist', 'client');
const manifestFile = join(dist, '.vite', 'manifest.json');
const KB = 1024;
const budgets = {
  signIn: Number(process.env.BUDGET_SIGN_IN_KB ?? 150) * KB,
  route: Number(process.env.BUDGET_ROUTE_KB ?? 300) * KB,
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
for (const key of routes.sort()) {
  const files = closure(key, new Set(entry));
  line(total(files) <= budgets.route, key, total(files), budgets.route, files);
}
console.log(`${passed} passed, ${failed} failed`);
process.exit(failed ? 1 : 0);
