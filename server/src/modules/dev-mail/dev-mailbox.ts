import { startMailCatcher } from '../../lib/mail-catcher';
import { TENANT_HEADER } from '../../lib/mailer';

export interface CaughtMail {
  id: number;
  to: string;
  /** Each recipient, lower-cased, to show a person only their own mail. */
  recipients: string[];
  /** The tenant the mail was sent for (the outbox sender names it in a header); none for account mail such as reset links. */
  tenantId: string | null;
  subject: string;
  body: string;
  receivedAt: Date;
}

export interface DevMailbox {
  port: number;
  messages: CaughtMail[];
  stop(): Promise<void>;
}

/** The demo's mail catcher: every mail the product sends lands here; /dev/mail shows each signed-in person their share. */
export async function startDevMailbox(port = 0): Promise<DevMailbox> {
  const catcher = await startMailCatcher(port);
  const messages: CaughtMail[] = [];
  let next = 1;
  catcher.tester.bind((_addr: string | null, id: number, email: { headers: Record<string, unknown>; body?: string; receivers: Record<string, boolean> }) => {
    const recipients = Object.keys(email.receivers).map((r) => r.toLowerCase());
    const tenant = email.headers[TENANT_HEADER.toLowerCase()];
    messages.unshift({
      id: next++,
      to: Object.keys(email.receivers).join(', '),
      recipients,
      tenantId: typeof tenant === 'string' && tenant ? tenant : null,
      subject: String(email.headers.subject ?? ''),
      body: email.body ?? '',
      receivedAt: new Date(),
    });
    if (messages.length > 200) messages.pop();
    catcher.tester.remove(id);
  });
  return { port: catcher.port, messages, stop: catcher.stop };
}
