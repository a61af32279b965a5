import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import { startTestServer, createTestDatabase, type TestServer } from '../fixtures/test-server';

/** A TCP relay in front of the real PostgreSQL, so the test can cut and restore the database link. */
async function startRelay(targetPort: number) {
  const sockets = new Set<net.Socket>();
  let server: net.Server | null = null;
  let port = 0;
  const open = () =>
    new Promise<void>((resolve) => {
      server = net.createServer((client) => {
        const upstream = net.connect(targetPort, '127.0.0.1');
        sockets.add(client).add(upstream);
        client.pipe(upstream).pipe(client);
        const drop = () => {
          client.destroy();
          upstream.destroy();
        };
        client.on('error', drop).on('close', drop);
        upstream.on('error', drop).on('close', drop);
      });
      server.listen(port, '127.0.0.1', () => {
        port = (server!.address() as AddressInfo).port;
        resolve();
      });
    });
  const cut = () =>
    new Promise<void>((resolve) => {
      for (const s of sockets) s.destroy();
      sockets.clear();
      server!.close(() => resolve());
    });
  await open();
  return { get port() { return port; }, cut, restore: open };
}

describe('GET /api/health', () => {
  let srv: TestServer;
  let relay: Awaited<ReturnType<typeof startRelay>>;
  let drop: () => Promise<void>;

  beforeAll(async () => {
    const db = await createTestDatabase();
    drop = db.drop;
    const url = new URL(db.url);
    relay = await startRelay(Number(url.port));
    url.port = String(relay.port);
    srv = await startTestServer({ databaseUrl: url.toString() });
  });
  afterAll(async () => {
    await srv.close();
    await relay.cut().catch(() => undefined);
    await drop();
  });

  it('when the database answers, then it reports ok and db up', async () => {
    const res = await srv.request.get('/api/health');
    expect(res.status).toBe(200);
    expect(res.body).toEqual({ status: 'ok', db: 'up' });
  });

  it('when the database link is cut, then 503 with db down; when it is back, then 200 again without a restart', async () => {
    await relay.cut();
    const down = await srv.request.get('/api/health');
    expect(down.status).toBe(503);
    expect(down.body.db).toBe('down');
    expect(down.body.error.code).toBe('service_unavailable');

    await relay.restore();
    let up = await srv.request.get('/api/health');
    for (let i = 0; i < 20 && up.status !== 200; i++) {
      await new Promise((r) => setTimeout(r, 100));
      up = await srv.request.get('/api/health');
    }
    expect(up.status).toBe(200);
    expect(up.body.db).toBe('up');
  });

  it('when an API route does not exist, then 404 in the error shape', async () => {
    const res = await srv.request.get('/api/no-such-thing');
    expect(res.status).toBe(404);
    expect(res.body).toEqual({ error: { code: 'not_found', message: expect.any(String), details: [] } });
  });
});
