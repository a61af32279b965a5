import { QueryTypes } from 'sequelize';
import { dueTimes, timedCheckLabels } from '@shared/permit/due-times';
import { siteTimeOfDay } from '@shared/time/zone';
import { workUnderWayStates } from '@shared/permit/states';
import { GAS_SHORT } from '@shared/gas-tests/verdict-text';
import { gasTestPlaceLabels } from '@shared/schemas/gas-tests.schema';
import type { HandoverAcceptInput, HandoverCreateInput } from '@shared/schemas/timed-checks.schema';
import type { GasTestRow } from '@shared/types/gas-tests';
import type { AcceptedHandover, HandoverRow } from '@shared/types/timed-checks';
import type { Page } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { requireSignature } from '../auth/signature-password';
import { appendAudit } from '../audit/audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { notifyChange } from '../isolations/isolation-queries';
import { auditActor, type CallerContext } from '../../lib/caller';
import type { PermitRow } from '../permits/permits.repository';
import { dueFactsFor, gasTestSelect } from './gas-tests.repository';
import { permitFor, requireWorkOpen } from './permit-access';
import { queueAlert } from './alert-mail';
import { holdsQualification } from '../../lib/qualifications';
import { qualificationForKind } from '@shared/permit/states';
import { qualificationLabels, type QualificationKind } from '@shared/abilities/roles';

/**
 * The qualifications the permit's kinds of work need that this person does not hold in date today
 * (the site's day), by name. A permit is held only by a lead qualified for its work (HSE HSG250).
 */
async function missingQualifications(deps: AppDeps, permit: PermitRow, userId: string, at: Date) {
  const needed = [...new Set(permit.kinds.map((k) => qualificationForKind[k] as QualificationKind))];
  const missing: string[] = [];
  for (const kind of needed) if (!(await holdsQualification(deps.sequelize, permit.tenantId, userId, kind, at))) missing.push(qualificationLabels[kind]);
  return missing;
}

const handoverSelect = `
  SELECT h.id, h.status, h.from_user_id AS "fromUserId", f.name AS "fromName", h.to_user_id AS "toUserId", t.name AS "toName",
         h.open_points AS "openPoints", h.readings_summary AS "readingsSummary", h.from_signed_at AS "fromSignedAt", h.accepted_at AS "acceptedAt"
  FROM permit_handovers h JOIN users f ON f.id = h.from_user_id JOIN users t ON t.id = h.to_user_id`;

export async function listHandovers(deps: AppDeps, caller: CallerContext, permitId: string, q: { page: number; pageSize: number }): Promise<Page<HandoverRow<Date>>> {
  return withTenant(deps.sequelize, caller.actor.tenantId, async () => {
    await permitFor(deps, caller, permitId, { action: 'read', type: 'Permit', what: 'permit' });
    const r = { tenantId: caller.actor.tenantId, permitId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
    const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM permit_handovers WHERE tenant_id = :tenantId AND permit_id = :permitId`, { replacements: r, type: QueryTypes.SELECT });
    const items = await deps.sequelize.query<HandoverRow<Date>>(`${handoverSelect} WHERE h.tenant_id = :tenantId AND h.permit_id = :permitId ORDER BY h.created_at DESC, h.id LIMIT :limit OFFSET :offset`, {
      replacements: r,
      type: QueryTypes.SELECT,
    });
    return { items, total: n, page: q.page, pageSize: q.pageSize };
  });
}

/** Latest readings and what is due, in a few lines written when the outgoing lead signs. */
async function readingsSummary(deps: AppDeps, permit: PermitRow): Promise<string[]> {
  const settings = await loadTenantSettings(deps.sequelize, permit.tenantId);
  const tests = await deps.sequelize.query<GasTestRow<Date>>(`${gasTestSelect} WHERE g.tenant_id = :tenantId AND g.permit_id = :permitId ORDER BY g.tested_at DESC LIMIT 3`, {
    replacements: { tenantId: permit.tenantId, permitId: permit.id },
    type: QueryTypes.SELECT,
  });
  const lines = tests.map((t) => {
    const r = t.readings;
    const values = `${GAS_SHORT.o2} ${r.o2Pct} %vol, ${GAS_SHORT.lel} ${r.lelPct} %LEL, ${GAS_SHORT.h2s} ${r.h2sPpm} ppm, ${GAS_SHORT.co} ${r.coPpm} ppm`;
    return `Gas test ${siteTimeOfDay(new Date(t.testedAt), settings.timeZone)} at the ${gasTestPlaceLabels[t.place].toLowerCase()}: ${values}: ${t.verdict.toUpperCase()} (${t.testerName}).`;
  });
  if (!lines.length) lines.push('No gas test recorded on this permit yet.');
  const now = deps.clock.now();
  for (const d of dueTimes(await dueFactsFor(deps.sequelize, permit, settings), now)) {
    if (!d.dueAt) continue;
    lines.push(`${timedCheckLabels[d.kind]} ${d.overdue ? `OVERDUE since ${siteTimeOfDay(d.dueAt, settings.timeZone)}` : `due at ${siteTimeOfDay(d.dueAt, settings.timeZone)}`}.`);
  }
  return lines;
}

export async function createHandover(deps: AppDeps, caller: CallerContext, permitId: string, input: HandoverCreateInput): Promise<HandoverRow<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'handover', type: 'Permit', what: 'permit' }, { lock: true });
    // After the role check, so someone who may not hand over hears that, not "re-enter your password".
    await requireSignature(deps, caller.user, input);
    requireWorkOpen(permit, 'A shift handover', workUnderWayStates);
    const holder = permit.holderUserId ?? permit.contractorLeadUserId;
    if (holder !== caller.user.id) throw AppError.unprocessable(`Only the lead who holds the permit now${permit.holderName ? ` (${permit.holderName})` : ''} can hand it over.`);
    if (input.toUserId === caller.user.id) throw AppError.validation('Hand over to someone else.', [{ path: 'toUserId', message: 'Choose the incoming lead.' }]);
    const lead = await deps.sequelize.query(`SELECT 1 FROM memberships m JOIN users u ON u.id = m.user_id WHERE m.tenant_id = :tenantId AND m.user_id = :userId AND m.organisation_id = :org AND m.role = 'contractor_lead' AND u.disabled_at IS NULL`, {
      replacements: { tenantId, userId: input.toUserId, org: permit.contractorOrganisationId },
      type: QueryTypes.SELECT,
    });
    if (!lead.length) throw AppError.validation('The incoming lead must be a contractor lead of the permit’s contractor.', [{ path: 'toUserId', message: `Choose a contractor lead of ${permit.contractorName}.` }]);
    const now = deps.clock.now();
    const missing = await missingQualifications(deps, permit, input.toUserId, now);
    if (missing.length)
      throw AppError.unprocessable(`The incoming lead has no in-date qualification for: ${missing.join(', ')}. Hand over to a lead qualified for this work.`, [
        { path: 'toUserId', message: `This lead has no in-date qualification for: ${missing.join(', ')}.` },
      ]);
    await deps.sequelize.query(`UPDATE permit_handovers SET status = 'superseded' WHERE tenant_id = :tenantId AND permit_id = :permitId AND status = 'pending'`, { replacements: { tenantId, permitId } });
    const summary = await readingsSummary(deps, permit);
    const [{ id }] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO permit_handovers (tenant_id, permit_id, from_user_id, to_user_id, open_points, readings_summary, from_signed_name, from_signed_at, created_at)
       VALUES (:tenantId, :permitId, :from, :to, :openPoints, CAST(:summary AS jsonb), :name, :now, :now) RETURNING id`,
      { replacements: { tenantId, permitId, from: caller.user.id, to: input.toUserId, openPoints: input.openPoints, summary: JSON.stringify(summary), name: caller.user.name, now }, type: QueryTypes.SELECT },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'handover', entityId: id, permitId, action: 'handover_signed_out', actor: auditActor(caller, 'handover'), ip: caller.ip,
      data: { toUserId: input.toUserId, signedName: caller.user.name, passwordConfirmed: true }, occurredAt: now,
    });
    const [row] = await deps.sequelize.query<HandoverRow<Date>>(`${handoverSelect} WHERE h.tenant_id = :tenantId AND h.id = :id`, { replacements: { tenantId, id }, type: QueryTypes.SELECT });
    const [incoming] = await deps.sequelize.query<{ email: string }>(`SELECT email FROM users WHERE id = :id`, { replacements: { id: input.toUserId }, type: QueryTypes.SELECT });
    await queueAlert(deps.sequelize, permit, {
      key: `handover:${tenantId}:${id}`, subject: 'shift handover to accept', to: [incoming.email], publicUrl: deps.config.PUBLIC_URL,
      lines: [`${caller.user.name} has signed permit ${permit.number} (${permit.title}) over to you. Read the open points and accept it with your signature.`, '', 'Open points:', input.openPoints, '', ...summary],
    });
    await notifyChange(deps.sequelize, { tenantId, kind: 'handover', id: permitId, status: 'pending' });
    return row;
  });
}

export async function acceptHandover(deps: AppDeps, caller: CallerContext, permitId: string, handoverId: string, input: HandoverAcceptInput): Promise<AcceptedHandover<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'handover', type: 'Permit', what: 'permit' }, { lock: true });
    await requireSignature(deps, caller.user, input);
    const [handover] = await deps.sequelize.query<{ status: string; to_user_id: string; from_user_id: string }>(
      `SELECT status, to_user_id, from_user_id FROM permit_handovers WHERE tenant_id = :tenantId AND permit_id = :permitId AND id = :id FOR UPDATE`,
      { replacements: { tenantId, permitId, id: handoverId }, type: QueryTypes.SELECT },
    );
    if (!handover) throw AppError.notFound('handover');
    if (handover.status !== 'pending') throw AppError.conflict(`This handover is ${handover.status} and can no longer be accepted.`);
    if (handover.to_user_id !== caller.user.id) throw AppError.forbidden('This handover names another incoming lead.');
    requireWorkOpen(permit, 'A shift handover', workUnderWayStates);
    const lead = await deps.sequelize.query(`SELECT 1 FROM memberships WHERE tenant_id = :tenantId AND user_id = :userId AND organisation_id = :org AND role = 'contractor_lead'`, {
      replacements: { tenantId, userId: caller.user.id, org: permit.contractorOrganisationId },
      type: QueryTypes.SELECT,
    });
    if (!lead.length) throw AppError.unprocessable(`You are no longer a contractor lead of ${permit.contractorName}.`);
    const now = deps.clock.now();
    const missing = await missingQualifications(deps, permit, caller.user.id, now);
    if (missing.length) throw AppError.unprocessable(`You have no in-date qualification for: ${missing.join(', ')}, so you cannot take this permit over.`);
    await deps.sequelize.query(`UPDATE permit_handovers SET status = 'accepted', to_signed_name = :name, accepted_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { name: caller.user.name, now, tenantId, id: handoverId },
    });
    await deps.sequelize.query(`UPDATE permits SET holder_user_id = :userId, version = version + 1, updated_at = :now WHERE tenant_id = :tenantId AND id = :permitId`, {
      replacements: { userId: caller.user.id, now, tenantId, permitId },
    });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: permitId, permitId, action: 'handover_accepted', actor: auditActor(caller, 'handover'), ip: caller.ip,
      data: { handoverId, fromUserId: handover.from_user_id, toUserId: caller.user.id, signedName: caller.user.name, passwordConfirmed: true }, occurredAt: now,
    });
    await notifyChange(deps.sequelize, { tenantId, kind: 'permit', id: permitId, state: permit.state, holder: caller.user.name });
    const [row] = await deps.sequelize.query<HandoverRow<Date>>(`${handoverSelect} WHERE h.tenant_id = :tenantId AND h.id = :id`, { replacements: { tenantId, id: handoverId }, type: QueryTypes.SELECT });
    return { ...row, holderUserId: caller.user.id, holderName: caller.user.name };
  });
}
