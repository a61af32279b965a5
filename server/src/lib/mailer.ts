import nodemailer, { type Transporter } from 'nodemailer';
import type { Sequelize, Transaction } from 'sequelize';
import { QueryTypes } from 'sequelize';
import type { Logger } from 'pino';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  tenantId?: string | null;
  /** Same key twice = one mail; lets callers enqueue safely on retries. */
  dedupeKey?: string;
}

// Header injection guard: addresses and subjects never carry line breaks.
const oneLine = (s: string) => s.replace(/[\r\n]+/g, ' ').trim();

export function createTransport(smtpUrl: string | undefined): Transporter | null {
  if (!smtpUrl) return null;
  const url = new URL(smtpUrl);
  return nodemailer.createTransport({
    host: url.hostname,
    port: Number(url.port || (url.protocol === 'smtps:' ? 465 : 25)),
    secure: url.protocol === 'smtps:',
    ignoreTLS: url.protocol === 'smtp:' && ['127.0.0.1', 'localhost'].includes(url.hostname),
    auth: url.username ? { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } : undefined,
    connectionTimeout: 5_000,
    greetingTimeout: 5_000,
    socketTimeout: 10_000,
  });
}

/** Writes mail to the outbox inside the caller's transaction; the worker sends it later. */
export async function enqueueMail(sequelize: Sequelize, mail: OutgoingMail, transaction?: Transaction) {
  await sequelize.query(
    `INSERT INTO mail_outbox (tenant_id, to_address, subject, text_body, dedupe_key)
     VALUES (:tenantId, :to, :subject, :text, :dedupeKey) ON CONFLICT (dedupe_key) DO NOTHING`,
    {
      replacements: { tenantId: mail.tenantId ?? null, to: oneLine(mail.to), subject: oneLine(mail.subject), text: mail.text, dedupeKey: mail.dedupeKey ?? null },
      transaction,
    },
  );
}

interface OutboxRow {
  id: number;
  tenant_id: string | null;
  to_address: string;
  subject: string;
  text_body: string;
  attempts: number;
}

const MAX_ATTEMPTS = 12;

/** Names the tenant a mail was sent for, so the development mailbox can show a tenant admin their tenant's mail. */
export const TENANT_HEADER = 'X-Holdpoint-Tenant';

/**
 * Sends due mail. The outbox is under row-level security, so the sender works through owner-run
 * functions (migration 0100): each row is claimed with FOR UPDATE SKIP LOCKED inside its own
 * transaction, so several server processes can run this at once without sending a mail twice, and a
 * sent mail keeps no usable link in its stored body.
 */
export async function deliverDueMail(sequelize: Sequelize, transport: Transporter | null, from: string, logger: Logger, limit = 20): Promise<number> {
  if (!transport) return 0;
  let sent = 0;
  for (let i = 0; i < limit; i++) {
    const done = await sequelize.transaction(async (t) => {
      const rows = await sequelize.query<OutboxRow>(`SELECT id, tenant_id, to_address, subject, text_body, attempts FROM hp_outbox_claim()`, { type: QueryTypes.SELECT, transaction: t });
      const row = rows[0];
      if (!row) return false;
      try {
        await transport.sendMail({ from, to: row.to_address, subject: row.subject, text: row.text_body, headers: row.tenant_id ? { [TENANT_HEADER]: row.tenant_id } : {} });
        await sequelize.query(`SELECT hp_outbox_sent(:id)`, { replacements: { id: row.id }, transaction: t });
        sent++;
      } catch (err) {
        const attempts = row.attempts + 1;
        const backoffSeconds = Math.min(2 ** attempts, 300);
        await sequelize.query(`SELECT hp_outbox_failed(:id, :attempts, :error, :giveUp, :backoff)`, {
          replacements: { id: row.id, attempts, error: String((err as Error).message).slice(0, 500), giveUp: attempts >= MAX_ATTEMPTS, backoff: backoffSeconds },
          transaction: t,
        });
        logger.warn({ mailId: row.id, attempts, err: (err as Error).message }, 'mail delivery failed; will retry');
        return 'failed';
      }
      return true;
    });
    if (done !== true) break;
  }
  return sent;
}
