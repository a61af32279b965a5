// `npm run build:server`: the server and shared/ compiled to JavaScript in dist/server (git-ignored), so
// production runs plain `node dist/server/index.js` instead of compiling TypeScript in the process.
//   dist/server/index.js      the server (cluster primary and workers)
//   dist/server/demo-cli.js   `setup` / `seed` of the demo data, as server/src/demo/cli.ts
//   dist/server/migrations/   one file per migration; the migrator finds them next to itself
// Packages stay in node_modules (not bundled); the @shared/… aliases are resolved from tsconfig.json.
// Plain .mjs like the other scripts; esbuild is loaded only once node_modules exists.
import { readdirSync, rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

/** Builds into `out` (inside the repository, so the packages in node_modules resolve from it). */
export async function buildServer(root = resolve(dirname(fileURLToPath(import.meta.url)), '..'), out = join(root, 'dist', 'server')) {
  const { build } = await import('esbuild');
  rmSync(out, { recursive: true, force: true });
  const common = {
    absWorkingDir: root,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    packages: 'external',
    tsconfig: join(root, 'tsconfig.json'),
    sourcemap: true,
    logLevel: 'warning',
  };
  await build({
    ...common,
    entryPoints: { index: 'server/src/index.ts', 'demo-cli': 'server/src/demo/cli.ts' },
    outdir: out,
    // Shared code in chunks beside the entries: the migrator reads import.meta.url to find migrations/.
    splitting: true,
    chunkNames: 'chunk-[hash]',
  });
  const migrations = join(root, 'server', 'src', 'db', 'migrations');
  await build({
    ...common,
    entryPoints: readdirSync(migrations).filter((f) => /^\d{4}-.*\.ts$/.test(f)).map((f) => join('server/src/db/migrations', f)),
    outdir: join(out, 'migrations'),
  });
  return out;
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const started = Date.now();
  await buildServer();
  console.log(`[build] server compiled to dist/server in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}
