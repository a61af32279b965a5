import { QueryTypes } from 'sequelize';
import { subject } from '@casl/ability';
import { decide, eventAction, eventsFrom, permitEventLabels, reasonedEvents, signedEvents, statesFrom, type PermitEvent } from '@shared/permit/state-machine';
import type { CreatePermitData, PermitsQuery, TransitionInput, UpdatePermitInput } from '@shared/schemas/permit.schema';
import type { PermitAction } from '@shared/types/permits';
import { checklistOpenStates, editableStates, workUnderWayStates } from '@shared/permit/states';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord, authorizeType } from '../../lib/authorize';
import { auditActor, type CallerContext } from '../../lib/caller';
import { scopeToSql } from '../../lib/casl-sql';
import { requireSignature } from '../auth/signature-password';
import { appendAudit } from '../audit/audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { tenantFireWatchMinutes } from '@shared/schemas/tenant-settings.schema';
import { checklistTemplate, findPermit, listPermits, nextPermitNumber, type PermitRow } from './permits.repository';
import { loadActorFacts, loadPermitFacts } from './permit-facts';
import { mailNewOverlaps } from './work-overlaps';
import { queuePermitMail } from './permit-mail';
import { requireRevalidationWithinMax, requireWindowWithinMax } from './validity-window';
import { recordPermitEditor } from './permit-editors';
import { certificateAfterTransition } from '../certificates/certificate-lifecycle';
import { resumeNeedsAuthoriser, suspendedByKindFor } from '@shared/permit/suspension';

const permitSubject = (p: Pick<PermitRow, 'tenantId' | 'contractorOrganisationId'> & Record<string, unknown>) =>
  subject('Permit', { ...p, tenantId: p.tenantId, contractorOrganisationId: p.contractorOrganisationId });

export const permitScopeColumns = { tenantId: 'p.tenant_id', contractorOrganisationId: 'p.contractor_organisation_id' };

export async function listPermitsFor(deps: AppDeps, caller: CallerContext, q: PermitsQuery) {
  // Any read rule will do here (a contractor's is limited to their organisation's permits); the scope below picks the rows.
  if (!caller.ability.can('read', 'Permit')) throw AppError.forbidden('Your role does not allow you to read permits.');
  const scope = scopeToSql(caller.ability, 'read', 'Permit', permitScopeColumns);
  return withTenant(deps.sequelize, caller.actor.tenantId, () => listPermits(deps.sequelize, caller.actor.tenantId, q, scope, deps.clock.now()));
}

async function checkReferences(deps: AppDeps, tenantId: string, input: Partial<CreatePermitData>) {
  const details: { path: string; message: string }[] = [];
  const one = (sql: string, replacements: Record<string, unknown>) => deps.sequelize.query(sql, { replacements, type: QueryTypes.SELECT });
  if (input.pipelineId && !(await one(`SELECT 1 FROM pipelines WHERE tenant_id = :tenantId AND id = :id`, { tenantId, id: input.pipelineId })).length)
    details.push({ path: 'pipelineId', message: 'Choose a pipeline from the register.' });
  if (input.contractorOrganisationId && !(await one(`SELECT 1 FROM organisations WHERE tenant_id = :tenantId AND id = :id AND kind = 'contractor'`, { tenantId, id: input.contractorOrganisationId })).length)
    details.push({ path: 'contractorOrganisationId', message: 'Choose a contractor organisation of this tenant.' });
  if (input.contractorLeadUserId) {
    const ok = await one(`SELECT 1 FROM memberships WHERE tenant_id = :tenantId AND user_id = :id AND organisation_id = :org AND role = 'contractor_lead'`, {
      tenantId,
      id: input.contractorLeadUserId,
      org: input.contractorOrganisationId ?? null,
    });
    if (!ok.length) details.push({ path: 'contractorLeadUserId', message: 'Choose a contractor lead of that organisation.' });
  }
  const settings = await loadTenantSettings(deps.sequelize, tenantId);
  // A permit may tighten the tenant's gas-test regime, never loosen it.
  if (input.gasTestWindowMinutes && input.gasTestWindowMinutes > settings.gasTestWindowMinutes)
    details.push({ path: 'gasTestWindowMinutes', message: `The tenant allows at most ${settings.gasTestWindowMinutes} minutes between the gas test and the start of work.` });
  if (input.gasTestIntervalMinutes && input.gasTestIntervalMinutes > settings.gasTestIntervalMinutes)
    details.push({ path: 'gasTestIntervalMinutes', message: `The tenant requires a repeat gas test at least every ${settings.gasTestIntervalMinutes} minutes.` });
  // NFPA 51B (2019 edition) §5.6.1.1 requires 60 minutes; only a tenant that chose the OSHA half hour may go below it.
  if (input.fireWatchMinutes && input.fireWatchMinutes < tenantFireWatchMinutes(settings))
    details.push({
      path: 'fireWatchMinutes',
      message: settings.fireWatchBasis === 'osha_half_hour' || settings.fireWatchMinutes > 60
        ? `The site requires a fire watch of at least ${tenantFireWatchMinutes(settings)} minutes after hot work.`
        : 'NFPA 51B (2019 edition) requires a fire watch of at least 60 minutes after hot work.',
    });
  if (details.length) throw AppError.validation('Some references are not valid.', details);
  if (input.validFrom && input.validTo) requireWindowWithinMax(settings, new Date(input.validFrom), new Date(input.validTo));
  return settings;
}

export async function createPermit(deps: AppDeps, caller: CallerContext, input: CreatePermitData) {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'create', 'Permit', { tenantId, contractorOrganisationId: input.contractorOrganisationId }, 'permits for that contractor');
  return withTenant(deps.sequelize, tenantId, async () => {
    const settings = await checkReferences(deps, tenantId, input);
    const now = deps.clock.now();
    const number = await nextPermitNumber(deps.sequelize, tenantId, now.getUTCFullYear());
    const lists = await checklistTemplate(deps.sequelize, tenantId, input.kinds);
    const [row] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO permits (tenant_id, number, state, kinds, title, scope, pipeline_id, from_position, to_position, job_reference, method_statement, hazards, ppe,
         checklist, walkdown, valid_from, valid_to, contractor_organisation_id, contractor_lead_user_id, requester_user_id, fire_watch_minutes, fire_watch_person,
         gas_test_window_minutes, gas_test_interval_minutes, created_at, updated_at)
       VALUES (:tenantId, :number, 'draft', ARRAY[:kinds]::text[], :title, :scope, :pipelineId, :fromPosition, :toPosition, :jobReference, :methodStatement, :hazards,
         CAST(:ppe AS text[]), CAST(:checklist AS jsonb), CAST(:walkdown AS jsonb), :validFrom, :validTo, :org, :lead, :requester, :fireWatch, :fireWatchPerson,
         :gasWindow, :gasInterval, :now, :now)
       RETURNING id`,
      {
        replacements: {
          tenantId, number, kinds: input.kinds, title: input.title, scope: input.scope, pipelineId: input.pipelineId, fromPosition: input.fromPosition,
          toPosition: input.toPosition, jobReference: input.jobReference ?? null, methodStatement: input.methodStatement, hazards: input.hazards,
          ppe: `{${input.ppe.map((p) => `"${p.replace(/["\\]/g, (c) => `\\${c}`)}"`).join(',')}}`, checklist: JSON.stringify(lists.checklist),
          walkdown: JSON.stringify(lists.walkdown), validFrom: input.validFrom, validTo: input.validTo, org: input.contractorOrganisationId,
          lead: input.contractorLeadUserId ?? null, requester: caller.user.id, fireWatch: Math.max(input.fireWatchMinutes, tenantFireWatchMinutes(settings)),
          fireWatchPerson: input.fireWatchPerson ?? null, gasWindow: input.gasTestWindowMinutes ?? settings.gasTestWindowMinutes,
          gasInterval: input.gasTestIntervalMinutes ?? settings.gasTestIntervalMinutes, now,
        },
        type: QueryTypes.SELECT,
      },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: row.id, permitId: row.id, action: 'created', toState: 'draft', actor: auditActor(caller, 'request'),
      ip: caller.ip, data: { number, title: input.title }, occurredAt: now,
    });
    await recordPermitEditor(deps.sequelize, tenantId, row.id, caller.user.id, now);
    return (await findPermit(deps.sequelize, tenantId, row.id))!;
  });
}

const updatable: Record<string, string> = {
  kinds: 'kinds', title: 'title', scope: 'scope', pipelineId: 'pipeline_id', fromPosition: 'from_position', toPosition: 'to_position', jobReference: 'job_reference',
  methodStatement: 'method_statement', hazards: 'hazards', ppe: 'ppe', validFrom: 'valid_from', validTo: 'valid_to', contractorOrganisationId: 'contractor_organisation_id',
  contractorLeadUserId: 'contractor_lead_user_id', fireWatchMinutes: 'fire_watch_minutes', fireWatchPerson: 'fire_watch_person',
  gasTestWindowMinutes: 'gas_test_window_minutes', gasTestIntervalMinutes: 'gas_test_interval_minutes',
};

/** Edits a draft (a rejected permit comes back as a draft). */
export async function updatePermit(deps: AppDeps, caller: CallerContext, id: string, input: UpdatePermitInput) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'update', 'Permit', await findPermit(deps.sequelize, tenantId, id, { lock: true }), 'permit');
    if (!editableStates.includes(permit.state)) throw AppError.unprocessable('Only a draft can be edited. A permit sent back by the authoriser returns to draft.');
    if (permit.version !== input.version) throw AppError.conflict('Someone changed this permit in the meantime. Reload it and try again.', { current: { state: permit.state, version: permit.version } });
    const merged = {
      ...input,
      fromPosition: input.fromPosition ?? permit.fromPosition,
      toPosition: input.toPosition ?? permit.toPosition,
      validFrom: input.validFrom ?? new Date(permit.validFrom).toISOString(),
      validTo: input.validTo ?? new Date(permit.validTo).toISOString(),
      contractorOrganisationId: input.contractorOrganisationId ?? permit.contractorOrganisationId,
    };
    if (merged.toPosition < merged.fromPosition) throw AppError.validation('The work range is back to front.', [{ path: 'toPosition', message: 'The end must not be before the start.' }]);
    // Half a window sent: the other half is the stored one, and together they must still run forwards.
    if (new Date(merged.validTo) <= new Date(merged.validFrom))
      throw AppError.validation('The permit must end after it starts.', [{ path: input.validTo ? 'validTo' : 'validFrom', message: 'The permit must end after it starts.' }]);
    await checkReferences(deps, tenantId, merged as Partial<CreatePermitData>);
    if (input.contractorOrganisationId && input.contractorOrganisationId !== permit.contractorOrganisationId)
      authorizeType(caller.ability, 'update', 'Permit', { tenantId, contractorOrganisationId: input.contractorOrganisationId }, 'permits for that contractor');
    const sets: string[] = [];
    const r: Record<string, unknown> = { tenantId, id, now: deps.clock.now() };
    for (const [key, column] of Object.entries(updatable)) {
      const value = (input as Record<string, unknown>)[key];
      if (value === undefined) continue;
      if (key === 'kinds' || key === 'ppe') {
        sets.push(`${column} = CAST(:${key} AS text[])`);
        r[key] = `{${(value as string[]).map((v) => `"${v.replace(/["\\]/g, (c) => `\\${c}`)}"`).join(',')}}`;
      } else {
        sets.push(`${column} = :${key}`);
        r[key] = value;
      }
    }
    if (input.kinds) {
      const lists = await checklistTemplate(deps.sequelize, tenantId, input.kinds);
      sets.push('checklist = CAST(:checklist AS jsonb)', 'walkdown = CAST(:walkdown AS jsonb)');
      r.checklist = JSON.stringify(lists.checklist);
      r.walkdown = JSON.stringify(lists.walkdown);
    }
    await deps.sequelize.query(`UPDATE permits SET ${[...sets, 'version = version + 1', 'updated_at = :now'].join(', ')} WHERE tenant_id = :tenantId AND id = :id`, { replacements: r });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: id, permitId: id, action: 'edited', actor: auditActor(caller, 'update'), ip: caller.ip,
      data: { fields: Object.keys(input).filter((k) => k !== 'version') }, occurredAt: deps.clock.now(),
    });
    await recordPermitEditor(deps.sequelize, tenantId, id, caller.user.id, deps.clock.now());
    return (await findPermit(deps.sequelize, tenantId, id))!;
  });
}

/** What this person could do next on the permit, with the reasons any of it is blocked. */
export async function availableActions(deps: AppDeps, caller: CallerContext, permit: PermitRow): Promise<PermitAction[]> {
  const subj = permitSubject(permit as unknown as PermitRow & Record<string, unknown>);
  const events = eventsFrom(permit.state).filter((e) => caller.ability.can(eventAction[e], subj));
  if (!events.length) return [];
  const now = deps.clock.now();
  const facts = await loadPermitFacts(deps.sequelize, permit);
  const actorFacts = await loadActorFacts(deps.sequelize, caller.actor, now);
  return events.map((event) => {
    const verdict = decide(event, facts, actorFacts, now, { reason: 'not needed for preview' });
    return {
      event,
      label: permitEventLabels[event],
      allowed: verdict.ok,
      reasons: verdict.ok ? [] : verdict.reasons,
      needsSignature: signedEvents.includes(event),
      // Resuming after a suspension by anyone but the lead is the authoriser's re-validation: it needs a reason.
      needsReason: reasonedEvents.includes(event) || (event === 'resume' && resumeNeedsAuthoriser(facts.suspendedByKind)),
    };
  });
}

/**
 * One transition in one transaction: lock the row, check the version, the role, the guards and the
 * signature, change the state, append the audit event and queue the mail.
 */
export async function transitionPermit(deps: AppDeps, caller: CallerContext, id: string, input: TransitionInput) {
  const { tenantId } = caller.actor;
  const event = input.event as PermitEvent;
  // Role first: someone who may not fire the event hears 403, not a remark about their signature.
  await withTenant(deps.sequelize, tenantId, async () =>
    authorizeRecord(caller.ability, eventAction[event], 'Permit', await findPermit(deps.sequelize, tenantId, id), 'permit'),
  );
  if (signedEvents.includes(event)) {
    await requireSignature(deps, caller.user, input);
  }
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await findPermit(deps.sequelize, tenantId, id, { lock: true });
    authorizeRecord(caller.ability, eventAction[event], 'Permit', permit, 'permit');
    return applyTransition(deps, permit!, event, input, { caller });
  });
}

/** Shared by people and by Holdpoint itself (scheduler, failing gas test). The caller holds the row lock. */
export async function applyTransition(
  deps: AppDeps,
  permit: PermitRow,
  event: PermitEvent,
  input: { version?: number; reason?: string; validTo?: string },
  who: { caller?: CallerContext; system?: string },
) {
  const { sequelize } = deps;
  const tenantId = permit.tenantId;
  if (input.version !== undefined && permit.version !== input.version)
    throw AppError.conflict(`This permit changed while you were looking at it; it is now ${permit.state.replace(/_/g, ' ')}. Reload and try again.`, {
      current: { state: permit.state, version: permit.version },
    });
  const now = deps.clock.now();
  const facts = await loadPermitFacts(sequelize, permit);
  if (event === 'revalidate' && input.validTo) facts.validTo = new Date(input.validTo);
  const actorFacts = who.caller ? await loadActorFacts(sequelize, who.caller.actor, now) : { userId: '', organisationIds: [], roles: [], qualifications: [], isSystem: true };
  const verdict = decide(event, facts, actorFacts, now, { reason: input.reason });
  if (!verdict.ok) throw AppError.unprocessable(verdict.reasons[0], verdict.reasons.map((m) => ({ path: 'event', message: m })));
  // The tenant's longest permit may have been shortened since the draft was written: the authoriser cannot approve past it.
  if (event === 'approve') requireWindowWithinMax(await loadTenantSettings(sequelize, tenantId), facts.validFrom, facts.validTo);
  if (event === 'revalidate' && input.validTo) requireRevalidationWithinMax(await loadTenantSettings(sequelize, tenantId), now, new Date(input.validTo));

  const sets = ['state = :to', 'version = version + 1', 'updated_at = :now'];
  const r: Record<string, unknown> = { tenantId, id: permit.id, to: verdict.to, now, userId: who.caller?.user.id ?? null };
  switch (event) {
    case 'approve':
      sets.push('authoriser_user_id = :userId', 'rejection_reason = NULL');
      break;
    case 'reject':
      sets.push('rejection_reason = :reason');
      r.reason = input.reason;
      break;
    case 'accept':
      sets.push('contractor_lead_user_id = coalesce(contractor_lead_user_id, :userId)', 'holder_user_id = :userId');
      break;
    case 'acknowledge_return':
      // A repeat acknowledgement is recorded in the trail but keeps the first one on the permit.
      sets.push('control_room_ack_at = coalesce(control_room_ack_at, :now)', 'control_room_ack_by = coalesce(control_room_ack_by, :userId)');
      break;
    case 'start_work':
    case 'resume':
      // Hot work may start again: an earlier "hot work stopped" no longer dates the fire watch.
      sets.push('hot_work_ended_at = NULL', 'suspended_by_kind = NULL', 'suspended_by_user_id = NULL', 'suspended_at = NULL', 'suspension_reason = NULL');
      break;
    case 'expire':
      // Re-validation returns an expired permit to where it was; a live one was only suspended and stays so.
      sets.push('expired_flag = true', 'state_before_expiry = :beforeExpiry');
      r.beforeExpiry = verdict.to === 'expired' ? permit.state : null;
      break;
    case 'revalidate':
      if (!input.validTo) throw AppError.validation('Give the new end of the validity window.', [{ path: 'validTo', message: 'Required to re-validate.' }]);
      sets.push('valid_to = :validTo', 'expired_flag = false', 'state_before_expiry = NULL');
      r.validTo = input.validTo;
      break;
    default:
      break;
  }
  // Who stopped the work decides who may restart it (shared/permit/suspension.ts); Holdpoint's own stops count as the system's.
  const waitsForResume = (state: string) => statesFrom('resume').includes(state as PermitRow['state']);
  if (waitsForResume(verdict.to) && !waitsForResume(permit.state)) {
    sets.push('suspended_by_kind = :suspendedByKind', 'suspended_by_user_id = :userId', 'suspended_at = :now', 'suspension_reason = :suspensionReason');
    r.suspendedByKind = who.caller ? suspendedByKindFor(who.caller.actor.memberships.map((m) => m.role)) : 'system';
    r.suspensionReason = input.reason ?? who.system ?? null;
  }
  await sequelize.query(`UPDATE permits SET ${sets.join(', ')} WHERE tenant_id = :tenantId AND id = :id`, { replacements: r });
  if (who.caller && signedEvents.includes(event)) {
    await sequelize.query(
      `INSERT INTO permit_signatures (tenant_id, permit_id, event, user_id, signed_name, password_confirmed, signed_at) VALUES (:tenantId, :id, :event, :userId, :name, true, :now)`,
      { replacements: { tenantId, id: permit.id, event, userId: who.caller.user.id, name: who.caller.user.name, now } },
    );
  }
  // The tenant's audit chain head stays locked from the append to the end of the transaction, and every
  // writer of the tenant queues on it: the mail, the overlap check, the notification and the answer's
  // read come first, the append last (with the certificate's own events, which follow it in the trail).
  await queuePermitMail(sequelize, permit, event, verdict.to, {
    actorName: who.caller?.user.name ?? 'Holdpoint', reason: input.reason ?? who.system, publicUrl: deps.config.PUBLIC_URL, transitionKey: `${permit.id}:${permit.version + 1}`, excludeUserEmail: who.caller?.user.email,
  });
  // Overlapping work on the same line is flagged to both permits' authorisers when first found (HSE HSG250).
  if (event === 'submit' || event === 'approve') await mailNewOverlaps(sequelize, permit, event === 'approve' ? (who.caller?.user.email ?? null) : null, deps.config.PUBLIC_URL);
  await sequelize.query(`SELECT pg_notify('holdpoint_changes', :payload)`, { replacements: { payload: JSON.stringify({ tenantId, kind: 'permit', id: permit.id, state: verdict.to }) } });
  const changed = (await findPermit(sequelize, tenantId, permit.id))!;
  await appendAudit(sequelize, {
    tenantId, entityType: 'permit', entityId: permit.id, permitId: permit.id, action: event, fromState: permit.state, toState: verdict.to,
    actor: who.caller ? auditActor(who.caller, eventAction[event]) : null, reason: input.reason ?? (who.system ? who.system : null), ip: who.caller?.ip ?? null,
    data: who.caller && signedEvents.includes(event)
      ? { signedName: who.caller.user.name, passwordConfirmed: true }
      : who.system
        ? { by: 'holdpoint' }
        : event === 'revalidate'
          ? { validTo: new Date(input.validTo!).toISOString() }
          : event === 'suspend'
            ? { suspendedBy: r.suspendedByKind }
            : event === 'resume'
              ? { suspendedBy: facts.suspendedByKind ?? null, revalidatedByAuthoriser: resumeNeedsAuthoriser(facts.suspendedByKind) }
              : {},
    occurredAt: now,
  });
  // The isolations-in-place signature issues the isolation certificate; a permit finished or cancelled no longer relies on one (HSE HSG253).
  await certificateAfterTransition(sequelize, permit, event, verdict.to, who.caller ? { userId: who.caller.user.id, name: who.caller.user.name } : null, now);
  return changed;
}

export async function updateChecklist(deps: AppDeps, caller: CallerContext, id: string, list: 'checklist' | 'walkdown', key: string, confirmed: boolean) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await findPermit(deps.sequelize, tenantId, id, { lock: true });
    // Before-work items are the crew's to confirm; the walk-down belongs to return to service.
    authorizeRecord(caller.ability, list === 'checklist' ? 'start_work' : 'return_to_service', 'Permit', permit, 'permit');
    const items = permit![list];
    const item = items.find((i) => i.key === key);
    if (!item) throw AppError.validation('That checklist item is not on this permit.', [{ path: 'key', message: 'Unknown item.' }]);
    if (!checklistOpenStates[list].includes(permit!.state)) throw AppError.unprocessable(`The ${list === 'checklist' ? 'checklist' : 'walk-down'} cannot be changed while the permit is ${permit!.state.replace(/_/g, ' ')}.`);
    const now = deps.clock.now();
    Object.assign(item, { confirmed, confirmedBy: confirmed ? caller.user.id : null, confirmedByName: confirmed ? caller.user.name : null, confirmedAt: confirmed ? now.toISOString() : null });
    await deps.sequelize.query(`UPDATE permits SET ${list} = CAST(:items AS jsonb), version = version + 1, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
      replacements: { items: JSON.stringify(items), now, tenantId, id },
    });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: id, permitId: id, action: confirmed ? `${list}_confirmed` : `${list}_unconfirmed`, actor: auditActor(caller, 'update'),
      ip: caller.ip, data: { key, label: item.label }, occurredAt: now,
    });
    return (await findPermit(deps.sequelize, tenantId, id))!;
  });
}

export async function recordHotWorkStopped(deps: AppDeps, caller: CallerContext, id: string) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await findPermit(deps.sequelize, tenantId, id, { lock: true });
    authorizeRecord(caller.ability, 'hand_back', 'Permit', permit, 'permit');
    if (!permit!.kinds.includes('hot_work')) throw AppError.unprocessable('This permit has no hot work.');
    if (!workUnderWayStates.includes(permit!.state)) throw AppError.unprocessable('Hot work can only stop on a permit with work under way.');
    const now = deps.clock.now();
    await deps.sequelize.query(`UPDATE permits SET hot_work_ended_at = :now, version = version + 1, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, { replacements: { now, tenantId, id } });
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: id, permitId: id, action: 'hot_work_stopped', actor: auditActor(caller, 'hand_back'), ip: caller.ip,
      data: { fireWatchUntil: new Date(now.getTime() + permit!.fireWatchMinutes * 60_000).toISOString() }, occurredAt: now,
    });
    return (await findPermit(deps.sequelize, tenantId, id))!;
  });
}
