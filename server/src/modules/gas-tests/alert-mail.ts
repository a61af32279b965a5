import { QueryTypes, type Sequelize } from 'sequelize';
import { enqueueMail } from '../../lib/mailer';
import type { PermitRow } from '../permits/permits.repository';

/**
 * Who hears about a missed or failed check: the lead holding the permit now, the contractor lead
 * named on it, and the authoriser who issued it (every authoriser of the tenant when none is named).
 */
export async function alertRecipients(sequelize: Sequelize, permit: PermitRow, extraUserIds: string[] = []): Promise<string[]> {
  const rows = await sequelize.query<{ email: string }>(
    `SELECT DISTINCT u.email FROM users u
     WHERE u.disabled_at IS NULL AND (
       u.id IN (:ids)
       OR (CAST(:authoriserId AS uuid) IS NULL AND EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'authoriser'))
     ) ORDER BY u.email`,
    {
      replacements: {
        tenantId: permit.tenantId,
        authoriserId: permit.authoriserUserId,
        ids: [permit.holderUserId, permit.contractorLeadUserId, permit.authoriserUserId, ...extraUserIds].filter(Boolean).concat('00000000-0000-0000-0000-000000000000'),
      },
      type: QueryTypes.SELECT,
    },
  );
  return rows.map((r) => r.email);
}

const FOOTER = 'Holdpoint records and checks the permit and isolation process; it does not replace the operator’s procedures, local codes or a competent person’s judgement.';

/** Writes one alert to the outbox for each recipient, in the caller's transaction; `key` makes it once only. */
export async function queueAlert(
  sequelize: Sequelize,
  permit: PermitRow,
  alert: { key: string; subject: string; lines: string[]; publicUrl: string; to?: string[] },
) {
  const emails = alert.to ?? (await alertRecipients(sequelize, permit));
  const text = [...alert.lines, '', `Open the permit: ${alert.publicUrl}/permits/${permit.id}`, '', FOOTER].join('\n');
  for (const email of emails) {
    await enqueueMail(sequelize, { tenantId: permit.tenantId, to: email, subject: `${permit.number} ${alert.subject}: ${permit.title}`, text, dedupeKey: `${alert.key}:${email}` });
  }
  return emails;
}
