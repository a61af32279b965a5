// `npm run bench -- cluster`: the signed-in reads of the bench against the cluster (HAProxy before three
// processes, PgBouncer, the hot standby; scripts/lib/cluster.mjs, demo data) and against one of its
// processes straight, with the same load; prints requests per second of each and the ratio.
// BENCH_SECONDS (10) per run, BENCH_CONNECTIONS (20). Started by scripts/bench.mjs, which starts the
// cluster and stops it again; HOLDPOINT_CLUSTER_STATE names it.
import { readFileSync } from 'node:fs';
import { cpus } from 'node:os';
import autocannon from 'autocannon';

interface State {
  url: string;
  ports: { backends: number[] };
}

const state = JSON.parse(readFileSync(process.env.HOLDPOINT_CLUSTER_STATE ?? '', 'utf8')) as State;
const seconds = Number(process.env.BENCH_SECONDS ?? 10);
const connections = Number(process.env.BENCH_CONNECTIONS ?? 20);
const paths = ['/api/board', '/api/permits?page=1&pageSize=25', '/api/audit/events?page=1&pageSize=25', '/api/auth/me'];

/** Signs in (from an address of its own, so the per-address limit is not the bench's ceiling) and returns the cookie header. */
async function signIn(base: string, from: string) {
  const jar = new Map<string, string>();
  const keep = (res: Response) => {
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const at = pair.indexOf('=');
      jar.set(pair.slice(0, at), pair.slice(at + 1));
    }
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  const csrfRes = await fetch(`${base}/api/auth/csrf`, { headers: { 'x-forwarded-for': from } });
  keep(csrfRes);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const res = await fetch(`${base}/api/auth/sign-in`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie: cookie(), 'x-forwarded-for': from },
    body: JSON.stringify({ email: 'authoriser@bramblecote.example', password: 'holdpoint-demo' }),
  });
  if (res.status !== 200) throw new Error(`sign-in failed: ${res.status}`);
  keep(res);
  return cookie();
}

async function run(name: string, base: string, cookie: string) {
  let i = 0;
  const codes: Record<string, number> = {};
  const started = Date.now();
  const result = await autocannon({
    url: base,
    connections,
    duration: seconds,
    headers: { cookie, 'accept-encoding': 'gzip' },
    requests: [{ setupRequest: (req) => ({ ...req, path: paths[i++ % paths.length] }) }],
  }).on('response', (_c: unknown, status: number) => {
    codes[status] = (codes[status] ?? 0) + 1;
  });
  const ok = Object.entries(codes).reduce((n, [c, k]) => (Number(c) < 400 ? n + k : n), 0);
  const rps = ok / ((Date.now() - started) / 1000);
  console.log(`[bench] ${name.padEnd(34)} ${rps.toFixed(0).padStart(6)} requests/s  p50 ${result.latency.p50} ms  p99 ${result.latency.p99} ms  answers ${JSON.stringify(codes)}`);
  return rps;
}

/** After a saturating run the balancer may have taken busy processes out for a moment: wait until it answers. */
async function balancerReady(base: string) {
  for (const deadline = Date.now() + 30_000; Date.now() < deadline; await new Promise((r) => setTimeout(r, 250)))
    if (await fetch(`${base}/api/health/ready`).then((r) => r.ok, () => false)) return;
  throw new Error('the balancer has no ready process');
}

const one = `http://127.0.0.1:${state.ports.backends[0]}`;
console.log(`[bench] signed-in reads (${paths.join(', ')}), ${connections} connections, ${seconds} s each, ${cpus().length} cores`);
const single = await run('one process (straight to its port)', one, await signIn(one, '192.0.2.201'));
await balancerReady(state.url);
const cluster = await run(`the cluster (HAProxy, ${state.ports.backends.length} processes)`, state.url, await signIn(state.url, '192.0.2.202'));
console.log(`[bench] the cluster's throughput is ${(cluster / single).toFixed(2)} times one process's`);
