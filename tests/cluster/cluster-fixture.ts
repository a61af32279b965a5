// What the cluster tests share: the running cluster's state (written by scripts/lib/cluster.mjs and
// read afresh, since a restarted process has a new pid), sessions kept as cookies, an event-stream
// reader that reconnects with Last-Event-ID, and the owner's connection to look at rows.
import { readFileSync } from 'node:fs';
import pg from 'pg';

export interface ClusterState {
  url: string;
  ownerUrl: string;
  directUrl: string;
  replicaUrl: string;
  standbyRoot: string;
  primaryRoot: string;
  dir: string;
  serverDir: string;
  env: Record<string, string>;
  ports: { http: number; backends: number[]; primary: number; standby: number; bouncer: number; s3: number };
  backends: { port: number; pid: number }[];
}

/** A browser's session held as cookies, usable against any address of the cluster. */
export class SessionCookies {
  private readonly cookies = new Map<string, string>();
  csrf = '';

  async send(base: string, method: string, path: string, body?: unknown, headers: Record<string, string> = {}, signal?: AbortSignal) {
    const isForm = body instanceof FormData;
    const res = await fetch(`${base}${path}`, {
      method,
      signal,
      headers: {
        cookie: [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; '),
        'x-csrf-token': this.csrf,
        ...(body !== undefined && !isForm ? { 'content-type': 'application/json' } : {}),
        ...headers,
      },
      body: body === undefined ? undefined : isForm ? body : JSON.stringify(body),
    });
    for (const line of res.headers.getSetCookie()) {
      const [pair] = line.split(';');
      const at = pair.indexOf('=');
      this.cookies.set(pair.slice(0, at), pair.slice(at + 1));
    }
    return res;
  }
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export function clusterState(): ClusterState {
  const file = process.env.HOLDPOINT_CLUSTER_STATE;
  if (!file) throw new Error('run these through `npm run test:cluster` (HOLDPOINT_CLUSTER_STATE names the running cluster)');
  return JSON.parse(readFileSync(file, 'utf8')) as ClusterState;
}

export const backendUrl = (i: number) => `http://127.0.0.1:${clusterState().ports.backends[i]}`;

/** The owner's connection straight to the primary, for arranging and inspecting rows. */
export async function ownerDb(): Promise<pg.Client> {
  const client = new pg.Client({ connectionString: clusterState().ownerUrl });
  await client.connect();
  return client;
}

/**
 * Signs in through the given address as if from `from` (X-Forwarded-For from a trusted loopback proxy),
 * so each test counts towards an address of its own in the per-address sign-in limit.
 */
export async function signIn(base: string, email: string, from: string, password = 'holdpoint-demo') {
  const s = new SessionCookies();
  const headers = { 'x-forwarded-for': from };
  s.csrf = ((await (await s.send(base, 'GET', '/api/auth/csrf', undefined, headers)).json()) as { csrfToken: string }).csrfToken;
  const res = await s.send(base, 'POST', '/api/auth/sign-in', { email, password }, headers);
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${await res.text()}`);
  return s;
}

export interface StreamEvent {
  id: number | null;
  event: string;
  data: unknown;
  at: number;
}

/**
 * An open screen's event stream (GET /api/stream), read with fetch. When the connection ends (a process
 * stopped or killed) it connects again with the last id it had in Last-Event-ID, as a browser does.
 */
export function openStream(base: () => string, session: SessionCookies, permitId: string) {
  const events: StreamEvent[] = [];
  let lastId: number | null = null;
  let closed = false;
  let connections = 0;
  let controller: AbortController | null = null;
  const readyWaiters: (() => void)[] = [];
  const run = async () => {
    while (!closed) {
      controller = new AbortController();
      try {
        const res = await session.send(base(), 'GET', `/api/stream?permitId=${permitId}`, undefined, {
          accept: 'text/event-stream',
          ...(lastId === null ? {} : { 'last-event-id': String(lastId) }),
        }, controller.signal);
        if (res.status !== 200 || !res.body) throw new Error(`stream answered ${res.status}`);
        connections += 1;
        const reader = res.body.getReader();
        const decoder = new TextDecoder();
        let buffer = '';
        for (;;) {
          const { done, value } = await reader.read();
          if (done) break;
          buffer += decoder.decode(value, { stream: true });
          let at;
          while ((at = buffer.indexOf('\n\n')) >= 0) {
            const block = buffer.slice(0, at);
            buffer = buffer.slice(at + 2);
            let id: number | null = null;
            let event = 'message';
            let data = '';
            for (const line of block.split('\n')) {
              if (line.startsWith('id: ')) id = Number(line.slice(4));
              else if (line.startsWith('event: ')) event = line.slice(7);
              else if (line.startsWith('data: ')) data += line.slice(6);
            }
            if (!data) continue;
            if (id !== null) lastId = id;
            events.push({ id, event, data: JSON.parse(data), at: Date.now() });
            if (event === 'ready') readyWaiters.splice(0).forEach((f) => f());
          }
        }
      } catch {
        /* the connection broke: connect again below */
      }
      if (!closed) await sleep(300);
    }
  };
  void run();
  return {
    events,
    get connections() {
      return connections;
    },
    ready: () => new Promise<void>((r) => readyWaiters.push(r)),
    close() {
      closed = true;
      controller?.abort();
    },
  };
}
