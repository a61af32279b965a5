import smtpTester from 'smtp-tester';
import type { AddressInfo, Server } from 'node:net';

export type Tester = ReturnType<typeof smtpTester.init>;

/** smtp-tester listens on every interface; move it to loopback on a free (or given) port. */
export async function startMailCatcher(port = 0): Promise<{ tester: Tester; port: number; stop: () => Promise<void> }> {
  const tester = smtpTester.init(0);
  const server = (tester as unknown as { smtpServer: { server: Server } }).smtpServer.server;
  await new Promise<void>((resolve) => (server.listening ? server.close(() => resolve()) : server.once('listening', () => server.close(() => resolve()))));
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => resolve());
  });
  const actual = (server.address() as AddressInfo).port;
  return {
    tester,
    port: actual,
    stop: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}
