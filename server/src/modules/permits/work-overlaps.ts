import { QueryTypes, type Sequelize } from 'sequelize';
import { workOverlapStates } from '@shared/permit/states';
import type { WorkOverlap } from '@shared/types/permits';
import { enqueueMail } from '../../lib/mailer';
import type { PermitRow } from './permits.repository';

interface OverlapRow extends WorkOverlap {
  id: string;
  /** The other permit's authoriser(s): its approver once approved, otherwise every authoriser of the tenant. */
  authoriserEmails: string[];
  /** Every authoriser of the tenant, for this permit while it awaits approval. */
  tenantAuthoriserEmails: string[];
}

const authoriserEmailsSql = (approverColumn: string) => `ARRAY(
  SELECT u.email FROM users u WHERE u.disabled_at IS NULL AND CASE WHEN ${approverColumn} IS NOT NULL THEN u.id = ${approverColumn}
    ELSE EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'authoriser') END
  ORDER BY u.email)`;

/**
 * Other permits on the same pipeline whose work range overlaps this one's, from sent for approval to
 * work complete (simultaneous operations, HSE HSG250: conflicting work must be identified). A warning
 * for both authorisers, not a refusal: two jobs may share a stretch of line when they are planned together.
 * One statement, whatever the number of permits or people.
 */
async function overlapRows(sequelize: Sequelize, permit: PermitRow): Promise<OverlapRow[]> {
  const rows = await sequelize.query<Omit<OverlapRow, 'message'>>(
    `SELECT p.id, p.number AS "permitNumber", p.title, p.state, p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition",
            ${authoriserEmailsSql('p.authoriser_user_id')} AS "authoriserEmails", ${authoriserEmailsSql('CAST(NULL AS uuid)')} AS "tenantAuthoriserEmails"
     FROM permits p
     WHERE p.tenant_id = :tenantId AND p.pipeline_id = :pipelineId AND p.id <> :id AND p.state IN (:states)
       AND p.from_position <= :to AND p.to_position >= :from
     ORDER BY p.number`,
    {
      replacements: { tenantId: permit.tenantId, pipelineId: permit.pipelineId, id: permit.id, states: workOverlapStates, from: permit.fromPosition, to: permit.toPosition },
      type: QueryTypes.SELECT,
    },
  );
  return rows.map((r) => ({ ...r, message: `${r.permitNumber} (${r.title}) also works between ${r.fromPosition} and ${r.toPosition} on this line` }));
}

export async function workOverlaps(sequelize: Sequelize, permit: PermitRow): Promise<WorkOverlap[]> {
  return (await overlapRows(sequelize, permit)).map(({ permitNumber, title, state, fromPosition, toPosition, message }) => ({ permitNumber, title, state, fromPosition, toPosition, message }));
}

/**
 * At submit and approve: one mail about each overlapping pair to each authoriser of either permit
 * (its approver once approved, otherwise the tenant's authorisers). The outbox key names the pair and
 * the person, so a pair found again later mails nobody twice.
 */
export async function mailNewOverlaps(sequelize: Sequelize, permit: PermitRow, approverEmail: string | null, publicUrl: string) {
  for (const other of await overlapRows(sequelize, permit)) {
    const pair = [permit.id, other.id].sort().join(':');
    const subject = `${permit.number} and ${other.permitNumber} work on the same stretch of ${permit.pipelineName}`;
    const text = [
      `Permit ${permit.number} (${permit.title}) works between ${permit.fromPosition} and ${permit.toPosition} on ${permit.pipelineName}.`,
      `Permit ${other.permitNumber} (${other.title}) works between ${other.fromPosition} and ${other.toPosition} on the same line.`,
      'Check that the two jobs, their isolations and their crews are planned together before either goes ahead.',
      '',
      `Open the permit: ${publicUrl}/permits/${permit.id}`,
      '',
      'Holdpoint records and checks the permit and isolation process; it does not replace the operator’s procedures, local codes or a competent person’s judgement.',
    ].join('\n');
    const emails = new Set([...(approverEmail ? [approverEmail] : other.tenantAuthoriserEmails), ...other.authoriserEmails]);
    for (const email of emails) await enqueueMail(sequelize, { tenantId: permit.tenantId, to: email, subject, text, dedupeKey: `overlap:${permit.tenantId}:${pair}:${email}` });
  }
}
