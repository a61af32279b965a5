import { defineConfig, type HtmlTagDescriptor, type Plugin } from 'vite';
import react from '@vitejs/plugin-react';
import tailwindcss from '@tailwindcss/vite';
import { VitePWA } from 'vite-plugin-pwa';
import { compression } from 'vite-plugin-compression2';
import { readFileSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';

const apiPort = process.env.PORT ?? '3000';

// The first visit to the start page ("My work") over a slow link (docs/performance.md, "First visit on a slow
// link"): every latency a request waits counts, so the signed-in shell and the start page arrive as few files,
// asked for by the page's head together with the entry instead of after it.
const source = (path: string) => fileURLToPath(new URL(path, import.meta.url));
const shellRoots = [source('./client/src/app/layout.tsx'), source('./client/src/app/routes/overview.tsx')];
const entrySource = source('./client/src/main.tsx');
/** The pages outside the shell, which load before anyone signs in. */
const signedOutPages = ['sign-in', 'forgot-password', 'reset-password', 'accept-invitation'].map((p) => source(`./client/src/features/auth/pages/${p}.tsx`));
type ModuleGraph = { getModuleInfo(id: string): { importedIds: readonly string[] } | null };
function staticallyReached(roots: string[], graph: ModuleGraph) {
  const seen = new Set<string>();
  const stack = [...roots];
  while (stack.length) {
    const id = stack.pop()!;
    if (seen.has(id)) continue;
    seen.add(id);
    stack.push(...(graph.getModuleInfo(id)?.importedIds ?? []));
  }
  return seen;
}
let shellGroups: Map<string, string> | undefined;
/**
 * What the signed-in shell and the start page import, in as few chunks as the signed-out pages allow: the
 * entry keeps its own code, and a module a signed-out page also uses goes into a chunk with the others used
 * by exactly the same signed-out pages, so no page outside the shell loads a byte more than before. Every
 * signed-in screen loads the shell anyway, so the pieces it shares with a route cost that route nothing more.
 */
function shellChunk(id: string, graph: ModuleGraph) {
  if (!shellGroups) {
    const entry = staticallyReached([entrySource], graph);
    const pages = signedOutPages.map((p) => staticallyReached([p], graph));
    shellGroups = new Map();
    for (const m of staticallyReached(shellRoots, graph)) {
      if (entry.has(m) || shellRoots.includes(m)) continue;
      const usedBy = pages.flatMap((reached, i) => (reached.has(m) ? [i] : []));
      // The sign-in page's pieces stay as they are: its budget is tight, and what a page imports is more than
      // what it keeps after unused exports are dropped, so a merged chunk could carry code it never runs.
      if (usedBy.includes(0)) continue;
      shellGroups.set(m, usedBy.length ? `shell-shared-${usedBy.join('')}` : 'shell');
    }
  }
  return shellGroups.get(id) ?? null;
}

/**
 * An input schema file (shared/schemas) also re-exports plain words kept in modules of their own (a gas-test
 * place, a kind of step: `export { … } from '../x/y'`). An import that takes only such words is pointed at
 * their own module, so a screen that names a place or a step does not load the validation library with them.
 */
function wordsWithoutSchemas(): Plugin {
  const reExports = new Map<string, Map<string, string>>();
  /** name → the module it comes from, for one schema file (read once per build). */
  const wordsOf = (schemaFile: string) => {
    let words = reExports.get(schemaFile);
    if (!words) {
      words = new Map();
      for (const [, names, from] of readFileSync(schemaFile, 'utf8').matchAll(/^export \{([^}]*)\} from '(\.[^']+)';$/gm))
        for (const name of names.split(',').map((n) => n.trim().replace(/^type\s+/, '')).filter(Boolean)) words.set(name, fileURLToPath(new URL(`${from}.ts`, pathToFileURL(schemaFile))));
      reExports.set(schemaFile, words);
    }
    return words;
  };
  return {
    name: 'holdpoint:words-without-schemas',
    apply: 'build',
    enforce: 'pre',
    buildStart() {
      reExports.clear();
    },
    transform: {
      filter: { id: /[\\/](client[\\/]src|shared)[\\/].*\.tsx?$/, code: /\.schema'/ },
      async handler(code, id) {
        let result = code;
        for (const [statement, , names, spec] of code.matchAll(/^import (type )?\{([^}]*)\} from '([^']+\.schema)';$/gm)) {
          const resolved = await this.resolve(spec, id);
          if (!resolved || !/[\\/]shared[\\/]schemas[\\/]/.test(resolved.id)) continue;
          const words = wordsOf(resolved.id);
          const taken = names.split(',').map((n) => n.trim().replace(/^type\s+/, '').split(/\s+as\s+/)[0]).filter(Boolean);
          const targets = new Set(taken.map((n) => words.get(n)));
          if (!taken.length || targets.size !== 1 || targets.has(undefined)) continue;
          result = result.replace(statement, statement.replace(`'${spec}'`, JSON.stringify([...targets][0])));
        }
        return result === code ? null : { code: result, map: null };
      },
    },
  };
}

/** `<link rel="modulepreload">` in index.html for the start page's chunks, so they load beside the entry. */
function preloadStartPage(): Plugin {
  return {
    name: 'holdpoint:preload-start-page',
    apply: 'build',
    buildStart() {
      shellGroups = undefined;
    },
    transformIndexHtml: {
      order: 'post',
      handler(_html, { bundle, chunk: entry }) {
        if (!bundle || !entry) return;
        const chunks = Object.values(bundle).flatMap((c) => (c.type === 'chunk' ? [c] : []));
        const files = new Set<string>();
        const add = (file: string) => {
          const c = bundle[file];
          if (!c || c.type !== 'chunk' || files.has(file)) return;
          files.add(file);
          c.imports.forEach(add);
        };
        for (const root of shellRoots) {
          const c = chunks.find((x) => x.facadeModuleId === root);
          if (!c) throw new Error(`The start page's chunk for ${root} is missing from the build.`);
          add(c.fileName);
        }
        // What the entry imports is preloaded by Vite already.
        const already = new Set<string>();
        const addAlready = (file: string) => {
          const c = bundle[file];
          if (c?.type !== 'chunk' || already.has(file)) return;
          already.add(file);
          c.imports.forEach(addAlready);
        };
        addAlready(entry.fileName);
        return [...files]
          .filter((f) => !already.has(f))
          .map((f): HtmlTagDescriptor => ({ tag: 'link', attrs: { rel: 'modulepreload', crossorigin: true, href: `/${f}` }, injectTo: 'head' }));
      },
    },
  };
}

export default defineConfig({
  root: 'client',
  plugins: [
    react(),
    tailwindcss(),
    wordsWithoutSchemas(),
    preloadStartPage(),
    // The installable app shell (docs/architecture.md, "App shell"): the worker keeps the built shell, CSS,
    // the Latin fonts and every route chunk, and answers the app's addresses with index.html when offline.
    // It never stores API answers: the data kept on the device is the query cache's, not the worker's.
    VitePWA({
      registerType: 'prompt',
      injectRegister: false,
      includeAssets: ['favicon.svg', 'icons/apple-touch-icon-180.png'],
      manifest: {
        name: 'Holdpoint',
        short_name: 'Holdpoint',
        description: 'Permit-to-work and isolation register for pipeline repair',
        lang: 'en',
        start_url: '/',
        scope: '/',
        display: 'standalone',
        theme_color: '#1d3b4a',
        background_color: '#f4f2ec',
        icons: [
          { src: '/icons/icon.svg', sizes: 'any', type: 'image/svg+xml' },
          { src: '/icons/icon-192.png', sizes: '192x192', type: 'image/png' },
          { src: '/icons/icon-512.png', sizes: '512x512', type: 'image/png' },
          { src: '/icons/icon-maskable-512.png', sizes: '512x512', type: 'image/png', purpose: 'maskable' },
        ],
      },
      workbox: {
        // Fonts: only the Latin subsets the screens are written in; other scripts load when a name needs them.
        globPatterns: ['**/*.{js,css,html}', 'assets/noto-sans-latin-[0-9]*-normal-*.woff2'],
        // The report page's charts need the server's figures to draw anything, so the charting library is not kept for offline use.
        globIgnores: ['assets/report-chart-*.js'],
        navigateFallback: '/index.html',
        navigateFallbackDenylist: [/^\/api\//, /^\/dev\//],
        cleanupOutdatedCaches: true,
        runtimeCaching: [],
      },
    }),
    // Brotli and gzip files beside every text asset, served as they are (server/src/app.ts).
    compression({ algorithms: ['brotliCompress', 'gzip'], include: /\.(js|css|html|svg|json|webmanifest)$/ }),
  ],
  resolve: {
    alias: {
      '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
      '@client': fileURLToPath(new URL('./client/src', import.meta.url)),
    },
  },
  build: {
    outDir: '../dist/client',
    emptyOutDir: true,
    manifest: true,
    sourcemap: false,
    // Browsers without `modulepreload` (Safari before 17) still load every chunk, only without the head start.
    modulePreload: { polyfill: false },
    rolldownOptions: {
      output: {
        // Only the modules named: pulling their dependencies in would drag the entry's own code along.
        codeSplitting: { groups: [{ debugName: 'shell', name: shellChunk, includeDependenciesRecursively: false }] },
      },
    },
  },
  server: {
    port: 5173,
    proxy: { '/api': { target: `http://127.0.0.1:${apiPort}`, changeOrigin: false } },
  },
});
