import { QueryTypes, type Sequelize } from 'sequelize';
import { enqueueMail } from '../../lib/mailer';

const FOOTER = 'Holdpoint records and checks the permit and isolation process; it does not replace the operator’s procedures, local codes or a competent person’s judgement.';

/** Who hears about a long-term isolation's failed or missed re-check: the authorisers who signed and kept it, and the control room. */
async function recipients(sequelize: Sequelize, tenantId: string, certificateId: string): Promise<string[]> {
  const rows = await sequelize.query<{ email: string }>(
    `SELECT DISTINCT u.email FROM users u
     WHERE u.disabled_at IS NULL AND (
       u.id IN (SELECT c.issued_by FROM isolation_certificates c WHERE c.tenant_id = :tenantId AND c.id = :id
                UNION SELECT c.long_term_by FROM isolation_certificates c WHERE c.tenant_id = :tenantId AND c.id = :id)
       OR EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'control_room')
     ) ORDER BY u.email`,
    { replacements: { tenantId, id: certificateId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.email);
}

/** One mail per person through the outbox, in the caller's transaction; `key` makes it once only. */
export async function queueCertificateAlert(
  sequelize: Sequelize,
  cert: { tenantId: string; id: string; number: string; pipelineName: string },
  alert: { key: string; subject: string; lines: string[]; publicUrl: string },
) {
  const emails = await recipients(sequelize, cert.tenantId, cert.id);
  const text = [...alert.lines, '', `Open the isolation certificate: ${alert.publicUrl}/certificates/${cert.id}`, '', FOOTER].join('\n');
  for (const email of emails)
    await enqueueMail(sequelize, { tenantId: cert.tenantId, to: email, subject: `${cert.number} ${alert.subject}: ${cert.pipelineName}`, text, dedupeKey: `${alert.key}:${email}` });
  return emails;
}
