// Server-Sent Events fan-out: many control-room screens on /api/board/stream, one isolation change,
// and how long until every screen has heard of it.
import http from 'node:http';
import { performance } from 'node:perf_hooks';
import type { BenchSession } from './session';

interface Screen {
  req: http.ClientRequest;
  ready: boolean;
  buffer: string;
  heardAt: number | null;
}

export interface FanOutResult {
  clients: number;
  connected: number;
  rounds: number;
  /** Every screen's delay, over all rounds, in ms. */
  delays: number[];
  /** Per round: the delay until the last screen had it (null when one never did). */
  allHeardMs: (number | null)[];
  missed: number;
}

/**
 * Opens `clients` streams, then for each round calls `change(round)`, which commits one change whose
 * event carries the text `marker(round)`, and waits until every stream has that event.
 */
export async function sseFanOut(
  base: string,
  session: BenchSession,
  clients: number,
  rounds: number,
  marker: (round: number) => string,
  change: (round: number) => Promise<void>,
): Promise<FanOutResult> {
  const url = new URL('/api/board/stream', base);
  const screens: Screen[] = [];
  let expected: string | null = null;
  let startedAt = 0;
  for (let i = 0; i < clients; i++) {
    const screen: Screen = { req: null as unknown as http.ClientRequest, ready: false, buffer: '', heardAt: null };
    screen.req = http.get(url, { agent: false, headers: { cookie: session.cookie, accept: 'text/event-stream' } }, (res) => {
      res.setEncoding('utf8');
      res.on('data', (chunk: string) => {
        screen.buffer += chunk;
        let end: number;
        while ((end = screen.buffer.indexOf('\n\n')) >= 0) {
          const message = screen.buffer.slice(0, end);
          screen.buffer = screen.buffer.slice(end + 2);
          if (message.includes('event: ready')) screen.ready = true;
          if (expected && screen.heardAt === null && message.includes('event: change') && message.includes(expected)) screen.heardAt = performance.now() - startedAt;
        }
      });
    });
    screen.req.on('error', () => undefined);
    screens.push(screen);
  }
  const until = async (ok: () => boolean, ms: number) => {
    const deadline = Date.now() + ms;
    while (!ok() && Date.now() < deadline) await new Promise((r) => setTimeout(r, 5));
    return ok();
  };
  await until(() => screens.every((s) => s.ready), 30_000);
  const connected = screens.filter((s) => s.ready).length;
  const delays: number[] = [];
  const allHeardMs: (number | null)[] = [];
  let missed = 0;
  try {
    for (let round = 0; round < rounds; round++) {
      for (const s of screens) s.heardAt = null;
      expected = marker(round);
      startedAt = performance.now();
      await change(round);
      const listening = screens.filter((s) => s.ready);
      const all = await until(() => listening.every((s) => s.heardAt !== null), 10_000);
      for (const s of listening) if (s.heardAt !== null) delays.push(s.heardAt);
      missed += listening.filter((s) => s.heardAt === null).length;
      allHeardMs.push(all ? Math.max(...listening.map((s) => s.heardAt!)) : null);
      await new Promise((r) => setTimeout(r, 300));
    }
  } finally {
    for (const s of screens) s.req.destroy();
  }
  return { clients, connected, rounds, delays, allHeardMs, missed };
}
