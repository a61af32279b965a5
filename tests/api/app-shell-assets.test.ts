// Issue 18, weight on the wire: the built client's files go out pre-compressed, by what the browser accepts,
// with long caching only where a file's name changes with its content. The client folder here is written by
// the test in the shape the build leaves (a hashed asset with its .br and .gz beside it); that the build
// writes those files is checked by the bundle stage (scripts/check-bundle-budget.mjs).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { brotliCompressSync, brotliDecompressSync, gunzipSync, gzipSync } from 'node:zlib';
import { startTestServer, type TestServer } from '../fixtures/test-server';

const script = `export const words = ${JSON.stringify(Array.from({ length: 200 }, (_, i) => `isolation point ${i} locked and tagged`))};\n`;
const asset = '/assets/app-Dx7kQ2aB.js';

let srv: TestServer;
let dist: string;

/** A raw GET: no client here decompresses or adds an Accept-Encoding of its own. */
function get(path: string, headers: Record<string, string> = {}) {
  const { hostname, port } = new URL(srv.baseUrl);
  return new Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: Buffer }>((resolve, reject) => {
    const req = request({ hostname, port, path, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    });
    req.on('error', reject);
    req.end();
  });
}

beforeAll(async () => {
  // Under a dot-folder, as a build kept beside the work tree may be: the page must still be served.
  dist = join(mkdtempSync(join(tmpdir(), 'holdpoint-client-')), '.build');
  mkdirSync(join(dist, 'assets'), { recursive: true });
  writeFileSync(join(dist, 'index.html'), `<!doctype html><html><head><script type="module" src="${asset}"></script></head><body><div id="root"></div></body></html>`);
  writeFileSync(join(dist, asset), script);
  writeFileSync(join(dist, `${asset}.br`), brotliCompressSync(script));
  writeFileSync(join(dist, `${asset}.gz`), gzipSync(script));
  writeFileSync(join(dist, 'sw.js'), 'self.addEventListener("fetch", () => undefined);\n');
  writeFileSync(join(dist, 'manifest.webmanifest'), JSON.stringify({ name: 'Holdpoint', start_url: '/' }));
  srv = await startTestServer({ env: { CLIENT_DIST: dist } });
});
afterAll(async () => {
  await srv?.close();
  if (dist) rmSync(join(dist, '..'), { recursive: true, force: true });
});

describe('issue 18: pre-compressed static assets and their caching', () => {
  it('when a browser accepts brotli, then a hashed asset is sent as the brotli file, long-cached, varying by encoding', async () => {
    const res = await get(asset, { 'Accept-Encoding': 'gzip, deflate, br' });
    expect(res.status).toBe(200);
    expect(res.headers['content-encoding']).toBe('br');
    expect(res.headers['content-type']).toMatch(/javascript/);
    expect(String(res.headers.vary)).toMatch(/Accept-Encoding/i);
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    expect(res.body.length).toBeLessThan(Buffer.byteLength(script) / 4);
    expect(brotliDecompressSync(res.body).toString()).toBe(script);
  });

  it('when a browser accepts gzip only, then the gzip file is sent', async () => {
    const res = await get(asset, { 'Accept-Encoding': 'gzip' });
    expect(res.headers['content-encoding']).toBe('gzip');
    expect(String(res.headers.vary)).toMatch(/Accept-Encoding/i);
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable');
    expect(gunzipSync(res.body).toString()).toBe(script);
  });

  it('when a client accepts neither, then the file is sent as it is (identity)', async () => {
    for (const headers of [{}, { 'Accept-Encoding': 'identity' }] as Record<string, string>[]) {
      const res = await get(asset, headers);
      expect(res.status).toBe(200);
      expect(res.headers['content-encoding']).toBeUndefined();
      expect(String(res.headers.vary)).toMatch(/Accept-Encoding/i);
      expect(res.body.toString()).toBe(script);
    }
  });

  it('when the page, an app address, the service worker or the manifest is fetched, then it is not long-cached', async () => {
    for (const path of ['/', '/index.html', '/permits/7a0c4a52-5f0e-4a43-9d55-0d0b9a3b1c11', '/sw.js', '/manifest.webmanifest']) {
      const res = await get(path, { 'Accept-Encoding': 'br, gzip' });
      expect(res.status, path).toBe(200);
      expect(res.headers['cache-control'], path).toBe('no-cache');
    }
    expect((await get('/')).body.toString()).toContain('<div id="root">');
  });

  it('when any page goes out, then its content security policy lets the service worker and the manifest load from the site only', async () => {
    const csp = String((await get('/')).headers['content-security-policy']);
    expect(csp).toContain("worker-src 'self'");
    expect(csp).toContain("manifest-src 'self'");
    expect(csp).toContain("script-src 'self'");
  });
});
