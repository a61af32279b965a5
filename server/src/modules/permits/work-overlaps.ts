import { createHash } from 'node:crypto';
import { QueryTypes, type Sequelize } from 'sequelize';
import { workOverlapStates } from '@shared/permit/states';
import type { WorkOverlap } from '@shared/types/permits';
import { enqueueMail } from '../../lib/mailer';
import type { PermitRow } from './permits.repository';

/**
 * How many overlapping permits the page and the mail name; the rest are counted ("and 37 more").
 * A stretch shared by hundreds of permits must not make the page or the mail hundreds of lines long,
 * nor the outbox one mail per pair.
 */
export const shownOverlaps = 10;

interface OverlapRow extends WorkOverlap {
  id: string;
  /** Every overlapping permit, the ones not shown included. */
  total: number;
  /** The authorisers of every overlapping permit (its approver once approved, otherwise every authoriser of the tenant). */
  otherAuthoriserEmails: string[];
  /** Every authoriser of the tenant, for this permit while it awaits approval. */
  tenantAuthoriserEmails: string[];
}

export interface Overlaps {
  shown: WorkOverlap[];
  /** Overlapping permits beyond those shown. */
  more: number;
}

/**
 * Other permits on the same pipeline whose work range overlaps this one's, from sent for approval to
 * work complete (simultaneous operations, HSE HSG250: conflicting work must be identified). A warning
 * for both authorisers, not a refusal: two jobs may share a stretch of line when they are planned together.
 * One statement, whatever the number of permits or people: the first few by number, the count of all,
 * and (for the mail) the people to tell. Served by `permits_work_overlap_idx` (migration 0160).
 */
async function overlapRows(sequelize: Sequelize, permit: PermitRow, withEmails: boolean): Promise<OverlapRow[]> {
  // Who to tell: the approver of each overlapping permit, or every authoriser while one awaits approval.
  const emails = withEmails
    ? `ARRAY(SELECT u.email FROM users u WHERE u.disabled_at IS NULL AND (
               u.id IN (SELECT p.authoriser_user_id FROM o JOIN permits p ON p.tenant_id = :tenantId AND p.id = o.id)
               OR (EXISTS (SELECT 1 FROM o JOIN permits p ON p.tenant_id = :tenantId AND p.id = o.id WHERE p.authoriser_user_id IS NULL)
                   AND u.id IN (SELECT user_id FROM authorisers)))
             ORDER BY u.email) AS "otherAuthoriserEmails",
           ARRAY(SELECT u.email FROM users u WHERE u.disabled_at IS NULL AND u.id IN (SELECT user_id FROM authorisers) ORDER BY u.email) AS "tenantAuthoriserEmails"`
    : `CAST('{}' AS text[]) AS "otherAuthoriserEmails", CAST('{}' AS text[]) AS "tenantAuthoriserEmails"`;
  // The ids, numbers and ranges come from the index alone (permits_work_overlap_idx, migration 0160);
  // only the permits shown are read from the table.
  const rows = await sequelize.query<Omit<OverlapRow, 'message'>>(
    `WITH o AS (
       SELECT p.id, p.number FROM permits p
       WHERE p.tenant_id = :tenantId AND p.pipeline_id = :pipelineId AND p.id <> :id AND p.state IN (:states)
         AND p.from_position <= :to AND p.to_position >= :from),
     shown AS (SELECT o.id FROM o ORDER BY o.number LIMIT :shown),
     authorisers AS (SELECT m.user_id FROM memberships m WHERE m.tenant_id = :tenantId AND m.role = 'authoriser')
     SELECT p.id, p.number AS "permitNumber", p.title, p.state, p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition",
            (SELECT count(*)::int FROM o) AS total, ${emails}
     FROM shown JOIN permits p ON p.tenant_id = :tenantId AND p.id = shown.id
     ORDER BY p.number`,
    {
      replacements: {
        tenantId: permit.tenantId, pipelineId: permit.pipelineId, id: permit.id, states: workOverlapStates, from: permit.fromPosition, to: permit.toPosition, shown: shownOverlaps,
      },
      type: QueryTypes.SELECT,
    },
  );
  return rows.map((r) => ({ ...r, message: `${r.permitNumber} (${r.title}) also works between ${r.fromPosition} and ${r.toPosition} on this line` }));
}

export async function workOverlaps(sequelize: Sequelize, permit: PermitRow): Promise<Overlaps> {
  const rows = await overlapRows(sequelize, permit, false);
  return {
    shown: rows.map(({ permitNumber, title, state, fromPosition, toPosition, message }) => ({ permitNumber, title, state, fromPosition, toPosition, message })),
    more: rows.length ? rows[0].total - rows.length : 0,
  };
}

const closing = [
  'Check that the jobs, their isolations and their crews are planned together before any of them goes ahead.',
  '',
] as const;
const disclaimer = 'Holdpoint records and checks the permit and isolation process; it does not replace the operator’s procedures, local codes or a competent person’s judgement.';

/**
 * At submit and approve: one mail to each authoriser of this permit and of the permits it overlaps
 * (its approver once approved, otherwise the tenant's authorisers), naming the first few overlapping
 * permits and counting the rest. The outbox key names what was found and the person, so the same
 * finding again later mails nobody twice; with one overlapping permit the key is the pair's, as before.
 */
export async function mailNewOverlaps(sequelize: Sequelize, permit: PermitRow, approverEmail: string | null, publicUrl: string) {
  const rows = await overlapRows(sequelize, permit, true);
  if (!rows.length) return;
  const { total, otherAuthoriserEmails, tenantAuthoriserEmails } = rows[0];
  const more = total - rows.length;
  const single = total === 1;
  const subject = single
    ? `${permit.number} and ${rows[0].permitNumber} work on the same stretch of ${permit.pipelineName}`
    : `${permit.number} works on the same stretch of ${permit.pipelineName} as ${total} other permits`;
  const text = [
    `Permit ${permit.number} (${permit.title}) works between ${permit.fromPosition} and ${permit.toPosition} on ${permit.pipelineName}.`,
    ...rows.map((o) => `Permit ${o.permitNumber} (${o.title}) works between ${o.fromPosition} and ${o.toPosition} on the same line.`),
    ...(more > 0 ? [`And ${more} more ${more === 1 ? 'permit' : 'permits'} on this stretch: open the permit to see them.`] : []),
    ...(single ? ['Check that the two jobs, their isolations and their crews are planned together before either goes ahead.', ''] : closing),
    `Open the permit: ${publicUrl}/permits/${permit.id}`,
    '',
    disclaimer,
  ].join('\n');
  const found = single
    ? [permit.id, rows[0].id].sort().join(':')
    : `${permit.id}:${createHash('sha256').update(`${total}:${rows.map((r) => r.id).join(',')}`).digest('hex').slice(0, 32)}`;
  const emails = new Set([...(approverEmail ? [approverEmail] : tenantAuthoriserEmails), ...otherAuthoriserEmails]);
  for (const email of emails) await enqueueMail(sequelize, { tenantId: permit.tenantId, to: email, subject, text, dedupeKey: `overlap:${permit.tenantId}:${found}:${email}` });
}
