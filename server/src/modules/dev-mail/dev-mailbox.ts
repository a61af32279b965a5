import { startMailCatcher } from '../../lib/mail-catcher';

export interface CaughtMail {
  id: number;
  to: string;
  subject: string;
  body: string;
  receivedAt: Date;
}

export interface DevMailbox {
  port: number;
  messages: CaughtMail[];
  stop(): Promise<void>;
}

/** The demo's mail catcher: every mail the product sends lands here and is listed on /dev/mail. */
export async function startDevMailbox(port = 0): Promise<DevMailbox> {
  const catcher = await startMailCatcher(port);
  const messages: CaughtMail[] = [];
  let next = 1;
  catcher.tester.bind((_addr: string | null, id: number, email: { headers: Record<string, unknown>; body?: string; receivers: Record<string, boolean> }) => {
    messages.unshift({ id: next++, to: Object.keys(email.receivers).join(', '), subject: String(email.headers.subject ?? ''), body: email.body ?? '', receivedAt: new Date() });
    if (messages.length > 200) messages.pop();
    catcher.tester.remove(id);
  });
  return { port: catcher.port, messages, stop: catcher.stop };
}
