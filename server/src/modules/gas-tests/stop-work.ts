import { QueryTypes } from 'sequelize';
import type { AppDeps } from '../../deps';
import { applyTransition } from '../permits/permits.service';
import type { PermitRow } from '../permits/permits.repository';
import { queueAlert } from './alert-mail';

/**
 * Holdpoint stops the work itself: a live permit is suspended at once, in the caller's transaction
 * (which holds the permit's row lock), with the reason in the audit trail. The suspension is the
 * system's (applyTransition records it so: only an authoriser's re-validation lets work resume) and
 * its mail goes to the authorisers, the contractor lead and the control room; the crew working now
 * (the lead holding the permit and everyone signed on to the lockbox) get the alarm as well.
 */
export async function suspendForStopWork(deps: AppDeps, permit: PermitRow, reason: string, cause: string) {
  const suspended = await applyTransition(deps, permit, 'suspend', { reason }, { system: cause });
  const crew = await deps.sequelize.query<{ email: string }>(
    `SELECT DISTINCT u.email FROM users u
     WHERE u.disabled_at IS NULL AND u.id IS DISTINCT FROM CAST(:leadId AS uuid) AND (
       u.id = CAST(:holderId AS uuid)
       OR u.id IN (SELECT user_id FROM permit_crew_members WHERE tenant_id = :tenantId AND permit_id = :permitId AND signed_off_at IS NULL)
     ) ORDER BY u.email`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id, leadId: permit.contractorLeadUserId, holderId: permit.holderUserId }, type: QueryTypes.SELECT },
  );
  if (crew.length)
    await queueAlert(deps.sequelize, permit, {
      key: `stop-work:${permit.tenantId}:${permit.id}:${suspended.version}`,
      subject: 'work stopped',
      lines: [`Holdpoint suspended permit ${permit.number} (${permit.title}). Stop work now.`, `Reason: ${reason}`, 'Work resumes only when an authoriser re-validates the permit.'],
      publicUrl: deps.config.PUBLIC_URL,
      to: crew.map((c) => c.email),
    });
  return suspended;
}
