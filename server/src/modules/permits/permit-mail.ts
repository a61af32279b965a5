import { QueryTypes, type Sequelize } from 'sequelize';
import { permitEventLabels, type PermitEvent } from '@shared/permit/state-machine';
import { permitStateLabels, type PermitState } from '@shared/permit/states';
import { enqueueMail } from '../../lib/mailer';
import type { PermitRow } from './permits.repository';

type Audience = 'authorisers' | 'requester' | 'lead' | 'control_room';

const audienceFor: Partial<Record<PermitEvent, Audience[]>> = {
  submit: ['authorisers'],
  reject: ['requester', 'lead'],
  approve: ['requester', 'lead'],
  accept: ['authorisers'],
  confirm_isolated: ['authorisers', 'lead', 'control_room'],
  start_work: ['authorisers', 'control_room'],
  suspend: ['authorisers', 'lead', 'control_room'],
  resume: ['authorisers', 'lead', 'control_room'],
  hand_back: ['authorisers'],
  return_to_service: ['control_room', 'lead'],
  close: ['requester', 'lead'],
  cancel: ['requester', 'lead', 'authorisers'],
  expire: ['authorisers', 'lead', 'control_room'],
  revalidate: ['lead', 'control_room'],
};

async function recipients(sequelize: Sequelize, permit: PermitRow, audience: Audience[]): Promise<string[]> {
  const rows = await sequelize.query<{ email: string }>(
    `SELECT DISTINCT u.email FROM users u
     WHERE u.disabled_at IS NULL AND (
       (:authorisers AND EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'authoriser'))
       OR (:controlRoom AND EXISTS (SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'control_room'))
       OR (:requester AND u.id = :requesterId)
       OR (:lead AND (u.id = :leadId OR (CAST(:leadId AS uuid) IS NULL AND EXISTS (
             SELECT 1 FROM memberships m WHERE m.user_id = u.id AND m.tenant_id = :tenantId AND m.role = 'contractor_lead' AND m.organisation_id = :orgId))))
     ) ORDER BY u.email`,
    {
      replacements: {
        tenantId: permit.tenantId,
        authorisers: audience.includes('authorisers'),
        controlRoom: audience.includes('control_room'),
        requester: audience.includes('requester'),
        lead: audience.includes('lead'),
        requesterId: permit.requesterUserId,
        leadId: permit.contractorLeadUserId,
        orgId: permit.contractorOrganisationId,
      },
      type: QueryTypes.SELECT,
    },
  );
  return rows.map((r) => r.email);
}

/** Writes the notification mails of one transition to the outbox, in the transition's transaction. */
export async function queuePermitMail(
  sequelize: Sequelize,
  permit: PermitRow,
  event: PermitEvent,
  to: PermitState,
  ctx: {
    actorName: string;
    reason?: string | null;
    publicUrl: string;
    /** Names this one transition: the permit and the version it reaches (the audit event is appended after the mail, see applyTransition). */
    transitionKey: string;
    excludeUserEmail?: string;
  },
) {
  const audience = audienceFor[event];
  if (!audience) return;
  const emails = (await recipients(sequelize, permit, audience)).filter((e) => e !== ctx.excludeUserEmail);
  const subject = `${permit.number} ${permitStateLabels[to]}: ${permit.title}`;
  const text = [
    `${ctx.actorName} chose "${permitEventLabels[event]}" on permit ${permit.number} (${permit.title}).`,
    `It is now: ${permitStateLabels[to]}.`,
    ctx.reason ? `Reason: ${ctx.reason}` : '',
    `Pipeline: ${permit.pipelineName}, ${permit.fromPosition}–${permit.toPosition}.`,
    '',
    `Open the permit: ${ctx.publicUrl}/permits/${permit.id}`,
    '',
    'Holdpoint records and checks the permit and isolation process; it does not replace the operator’s procedures, local codes or a competent person’s judgement.',
  ]
    .filter((l) => l !== '')
    .join('\n');
  for (const email of emails) {
    // The permit's new version makes the key unique per transition, so a retried request never mails twice.
    await enqueueMail(sequelize, { tenantId: permit.tenantId, to: email, subject, text, dedupeKey: `permit:${permit.tenantId}:${ctx.transitionKey}:${email}` });
  }
}
