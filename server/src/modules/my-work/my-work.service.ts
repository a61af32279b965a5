import { QueryTypes, type Sequelize } from 'sequelize';
import type { Action, SubjectName } from '@shared/abilities/define-ability';
import { hasRole } from '@shared/abilities/define-ability';
import { dueTimes, type DueFacts } from '@shared/permit/due-times';
import { statesFrom } from '@shared/permit/state-machine';
import { boardPermitStates, liveStates, revalidationStates, suspendedStates, workOpenStates, type PermitState, type WorkKind } from '@shared/permit/states';
import { awaitsAuthoriser, type SuspendedByKind } from '@shared/permit/suspension';
import { acknowledgementAction, applyStates, inPlaceStatuses, removeStates, stepActionRefusal, type StepActionName } from '@shared/isolations/step-rules';
import { removalNeedsException } from '@shared/isolations/lockout-rules';
import type { StepCondition, StepKind } from '@shared/schemas/isolation.schema';
import type { StepStatus } from '@shared/types/isolations';
import {
  myWorkListKeys, type MyWork, type MyWorkDue, type MyWorkGasItem, type MyWorkListKey, type MyWorkPermitItem, type MyWorkPermitRef, type MyWorkStepAction, type MyWorkStepItem,
} from '@shared/types/my-work';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { scopeToSql, type SqlScope } from '../../lib/casl-sql';
import type { CallerContext } from '../../lib/caller';
import { loadTenantSettings } from '../tenants/tenant-settings';

/**
 * The states each permit list waits in, from the state machine and the shared lists: the event the
 * caller fires next (accept, send again, approve, acknowledge the return) fires from these.
 */
const listStates = {
  toAccept: statesFrom('accept'),
  sentBack: statesFrom('submit'),
  liveWork: workOpenStates,
  gasDue: liveStates,
  toApprove: statesFrom('approve'),
  toRevalidate: revalidationStates,
  returnAck: statesFrom('acknowledge_return'),
};

/** Items per list in the answer; the counts are whole. */
export const MY_WORK_LIMIT = 50;

const scopeColumns = { tenantId: 'p.tenant_id', contractorOrganisationId: 'p.contractor_organisation_id' };

/** The caller's rows for one right, as SQL (FALSE when no role of theirs has it): the lists follow the CASL rules. */
function scopes(caller: CallerContext) {
  let n = 0;
  const of = (action: Action, subject: Exclude<SubjectName, 'all'>): SqlScope => scopeToSql(caller.ability, action, subject, scopeColumns, `s${n++}_`);
  return {
    accept: of('accept', 'Permit'),
    apply: of('apply', 'IsolationStep'),
    gasTest: of('create', 'GasTest'),
    approve: of('approve', 'Permit'),
    revalidate: of('revalidate', 'Permit'),
    plugAck: of('approve', 'IsolationStep'),
    stepAck: of('acknowledge', 'IsolationStep'),
    returnAck: of('acknowledge', 'Permit'),
  };
}

interface PermitRowFacts {
  id: string;
  number: string;
  title: string;
  state: PermitState;
  pipeline_id: string;
  pipeline_name: string;
  valid_to: Date;
  kinds: WorkKind[];
  rejection_reason: string | null;
  suspension_reason: string | null;
  suspended_by_kind: SuspendedByKind | null;
  expired_flag: boolean;
  gas_test_interval_minutes: number;
  hot_work_ended_at: Date | null;
  fire_watch_minutes: number;
  to_accept: boolean;
  sent_back: boolean;
  live_work: boolean;
  gas_due: boolean;
  to_approve: boolean;
  to_revalidate: boolean;
  return_ack: boolean;
  last_pass: Date | null;
  live_since: Date | null;
  isolated_since: Date | null;
  last_vent: Date | null;
  last_plug: Date | null;
  last_fire: Date | null;
  vents: number | null;
  plugs: number | null;
}

interface StepRowFacts {
  id: string;
  permit_id: string;
  number: string;
  title: string;
  permit_state: PermitState;
  pipeline_id: string;
  pipeline_name: string;
  label: string;
  kind: StepKind;
  condition: StepCondition;
  status: StepStatus;
  lock_id: string | null;
  tag_id: string | null;
  held_by: string | null;
  applied_by: string | null;
  remotely_operable: boolean;
  remote_ack_at: Date | null;
  control_room_ack_applied_at: Date | null;
  control_room_ack_removed_at: Date | null;
  plug_warnings: unknown[];
  plug_warnings_ack_at: Date | null;
  removal_exception: boolean;
  as_tech: boolean;
  as_control: boolean;
  as_authoriser: boolean;
}

/**
 * Permits waiting for the caller, one statement: each list's condition is a column (its CASL scope
 * inside it), and the due-time facts are looked up only for live work and gas tests (each a probe of
 * a per-permit index). The rules that judge them are the shared ones (due-times.ts).
 */
async function permitRows(sequelize: Sequelize, tenantId: string, userId: string, s: ReturnType<typeof scopes>) {
  const inList = `(to_accept OR sent_back OR live_work OR gas_due OR to_approve OR to_revalidate OR return_ack)`;
  const facts = (sql: string) => `CASE WHEN c.live_work OR c.gas_due THEN (${sql}) END`;
  return sequelize.query<PermitRowFacts>(
    `WITH c AS (
       SELECT p.id, p.tenant_id, p.number, p.title, p.state, p.pipeline_id, p.valid_to, p.kinds, p.rejection_reason, p.suspension_reason, p.suspended_by_kind, p.expired_flag,
              p.gas_test_interval_minutes, p.hot_work_ended_at, p.fire_watch_minutes,
              (p.state IN (:toAccept) AND (p.contractor_lead_user_id IS NULL OR p.contractor_lead_user_id = :userId) AND ${s.accept.sql}) AS to_accept,
              (p.state IN (:sentBack) AND p.rejection_reason IS NOT NULL AND (p.requester_user_id = :userId OR p.contractor_lead_user_id = :userId) AND ${s.accept.sql}) AS sent_back,
              (p.state IN (:liveWork) AND coalesce(p.holder_user_id, p.contractor_lead_user_id) = :userId AND ${s.accept.sql}) AS live_work,
              (p.state IN (:gasDue) AND ${s.gasTest.sql}) AS gas_due,
              -- Two people and four eyes (HSE HSG250): a permit the caller wrote or changed waits for another authoriser, not them.
              (p.state IN (:toApprove) AND p.requester_user_id <> :userId AND ${s.approve.sql}
                AND NOT EXISTS (SELECT 1 FROM permit_editors e WHERE e.tenant_id = p.tenant_id AND e.permit_id = p.id AND e.user_id = :userId)) AS to_approve,
              -- Which of these wait for the authoriser is the shared rule's (awaitsAuthoriser), applied below.
              (p.state IN (:toRevalidate) AND ${s.revalidate.sql}) AS to_revalidate,
              (p.state IN (:returnAck) AND p.control_room_ack_at IS NULL AND ${s.returnAck.sql}) AS return_ack
       FROM permits p
       WHERE p.tenant_id = :tenantId AND p.state IN (:states)
     )
     SELECT c.id, c.number, c.title, c.state, c.pipeline_id, pl.name AS pipeline_name, c.valid_to, c.kinds, c.rejection_reason, c.suspension_reason, c.suspended_by_kind, c.expired_flag,
            c.gas_test_interval_minutes, c.hot_work_ended_at, c.fire_watch_minutes,
            c.to_accept, c.sent_back, c.live_work, c.gas_due, c.to_approve, c.to_revalidate, c.return_ack,
            ${facts(`SELECT max(g.tested_at) FROM gas_tests g WHERE g.tenant_id = c.tenant_id AND g.permit_id = c.id AND g.verdict = 'pass'`)} AS last_pass,
            ${facts(`SELECT max(a.occurred_at) FROM audit_events a WHERE a.tenant_id = c.tenant_id AND a.permit_id = c.id AND a.action IN ('start_work', 'resume') AND a.to_state IN (:live)`)} AS live_since,
            ${facts(`SELECT max(a.occurred_at) FROM audit_events a WHERE a.tenant_id = c.tenant_id AND a.permit_id = c.id AND a.action = 'confirm_isolated'`)} AS isolated_since,
            ${facts(`SELECT max(k.checked_at) FROM permit_checks k WHERE k.tenant_id = c.tenant_id AND k.permit_id = c.id AND k.kind = 'vent'`)} AS last_vent,
            ${facts(`SELECT max(k.checked_at) FROM permit_checks k WHERE k.tenant_id = c.tenant_id AND k.permit_id = c.id AND k.kind = 'plug'`)} AS last_plug,
            ${facts(`SELECT max(k.checked_at) FROM permit_checks k WHERE k.tenant_id = c.tenant_id AND k.permit_id = c.id AND k.kind = 'fire_watch' AND k.ok`)} AS last_fire,
            ${facts(`SELECT count(*)::int FROM isolation_steps st WHERE st.tenant_id = c.tenant_id AND st.permit_id = c.id AND st.kind = 'vent' AND st.status IN (:inPlace)`)} AS vents,
            ${facts(`SELECT count(*)::int FROM isolation_steps st WHERE st.tenant_id = c.tenant_id AND st.permit_id = c.id AND st.kind = 'plug' AND st.status IN (:inPlace)`)} AS plugs
     FROM c JOIN pipelines pl ON pl.tenant_id = c.tenant_id AND pl.id = c.pipeline_id
     WHERE ${inList}
     ORDER BY c.number`,
    {
      replacements: {
        tenantId, userId, live: liveStates, inPlace: inPlaceStatuses, ...listStates,
        states: [...new Set(Object.values(listStates).flat())],
        ...s.accept.replacements, ...s.gasTest.replacements, ...s.approve.replacements, ...s.revalidate.replacements, ...s.returnAck.replacements,
      },
      type: QueryTypes.SELECT,
    },
  );
}

/**
 * Isolation steps waiting for the caller, one statement: the technician's (apply, verify, remove on
 * their organisation's permits), the control room's acknowledgements and the authoriser's plug
 * warnings. SQL narrows the rows; the shared step rules (step-rules.ts) decide each action.
 */
async function stepRows(sequelize: Sequelize, tenantId: string, userId: string, s: ReturnType<typeof scopes>) {
  return sequelize.query<StepRowFacts>(
    `SELECT st.id, st.permit_id, p.number, p.title, p.state AS permit_state, p.pipeline_id, pl.name AS pipeline_name, coalesce(ip.tag_code, st.temp_label) AS label,
            st.kind, st.condition, st.status, st.lock_id, st.tag_id, coalesce(st.held_by, st.applied_by) AS held_by, st.applied_by,
            st.remotely_operable, st.remote_ack_at, st.control_room_ack_applied_at, st.control_room_ack_removed_at, st.plug_warnings, st.plug_warnings_ack_at,
            EXISTS (SELECT 1 FROM lock_removal_exceptions e WHERE e.tenant_id = st.tenant_id AND e.permit_id = st.permit_id AND e.step_id = st.id AND e.remover_user_id = :userId) AS removal_exception,
            ${s.apply.sql} AS as_tech, ${s.stepAck.sql} AS as_control, ${s.plugAck.sql} AS as_authoriser
     FROM permits p
     JOIN isolation_steps st ON st.tenant_id = p.tenant_id AND st.permit_id = p.id
     JOIN pipelines pl ON pl.tenant_id = p.tenant_id AND pl.id = p.pipeline_id
     LEFT JOIN isolation_points ip ON ip.tenant_id = st.tenant_id AND ip.id = st.point_id
     WHERE p.tenant_id = :tenantId AND p.state IN (:states)
       AND ((${s.apply.sql} AND ((st.status = 'planned' AND p.state IN (:applyStates)) OR (st.status = 'applied' AND st.applied_by <> :userId) OR (st.status IN (:inPlace) AND p.state IN (:removeStates))))
         OR (${s.stepAck.sql} AND ((st.status IN (:inPlace) AND (st.control_room_ack_applied_at IS NULL OR (st.remotely_operable AND st.remote_ack_at IS NULL)))
                                   OR (st.status = 'removed' AND st.control_room_ack_removed_at IS NULL)))
         OR (${s.plugAck.sql} AND st.kind = 'plug' AND st.status <> 'removed' AND st.plug_warnings_ack_at IS NULL AND jsonb_array_length(st.plug_warnings) > 0))
     ORDER BY p.number, st.seq`,
    {
      replacements: {
        tenantId, userId, inPlace: inPlaceStatuses, applyStates, removeStates,
        // Every state a step can wait in: isolations go on from accepted and the last acknowledgement of a removal may come after return to service.
        states: [...boardPermitStates, ...listStates.returnAck],
        ...s.apply.replacements, ...s.stepAck.replacements, ...s.plugAck.replacements,
      },
      type: QueryTypes.SELECT,
    },
  );
}

const permitRef = (r: { permit_id?: string; id: string; number: string; title: string; pipeline_id: string; pipeline_name: string }, state: PermitState): MyWorkPermitRef => ({
  id: r.permit_id ?? r.id, number: r.number, title: r.title, state, pipelineId: r.pipeline_id, pipelineName: r.pipeline_name,
});

/** What the caller has to do now, per role they hold in the active tenant. */
export async function myWorkFor(deps: AppDeps, caller: CallerContext): Promise<MyWork<Date>> {
  const { sequelize, clock } = deps;
  const { actor } = caller;
  const userId = caller.user.id;
  const now = clock.now();
  const roles = {
    lead: hasRole(actor, 'contractor_lead'),
    technician: hasRole(actor, 'isolation_technician'),
    gasTester: hasRole(actor, 'gas_tester'),
    authoriser: hasRole(actor, 'authoriser'),
    controlRoom: hasRole(actor, 'control_room'),
  };
  const s = scopes(caller);
  const wantsPermits = roles.lead || roles.gasTester || roles.authoriser || roles.controlRoom;
  const wantsSteps = roles.technician || roles.authoriser || roles.controlRoom;

  const { permits, steps, settings } = await withTenant(sequelize, actor.tenantId, async () => ({
    permits: wantsPermits ? await permitRows(sequelize, actor.tenantId, userId, s) : [],
    steps: wantsSteps ? await stepRows(sequelize, actor.tenantId, userId, s) : [],
    // Vent and plug check intervals are the site's; only a lead's live work shows them.
    settings: roles.lead ? await loadTenantSettings(sequelize, actor.tenantId) : null,
  }));

  const factsOf = (r: PermitRowFacts): DueFacts => ({
    state: r.state,
    kinds: r.kinds,
    liveSince: r.live_since,
    isolatedSince: r.isolated_since,
    gas: { lastPassAt: r.last_pass, intervalMinutes: r.gas_test_interval_minutes },
    vent: { lastAt: r.last_vent, intervalMinutes: settings?.ventCheckIntervalMinutes ?? 0, open: settings ? (r.vents ?? 0) : 0 },
    plug: { lastAt: r.last_plug, intervalMinutes: settings?.plugCheckIntervalMinutes ?? 0, inPlace: settings ? (r.plugs ?? 0) : 0 },
    fireWatch: { hotWorkEndedAt: r.hot_work_ended_at, minutes: r.fire_watch_minutes, lastCheckAt: r.last_fire },
  });
  const permitItem = (r: PermitRowFacts, reason: string | null, due: MyWorkDue<Date>[] = []): MyWorkPermitItem<Date> => ({
    permit: permitRef(r, r.state), validTo: r.valid_to, reason, due,
  });
  const firstDue = (item: MyWorkPermitItem<Date>) => item.due[0]?.dueAt.getTime() ?? Number.POSITIVE_INFINITY;

  const liveWork = permits.filter((r) => r.live_work).map((r) => {
    const due: MyWorkDue<Date>[] = dueTimes(factsOf(r), now)
      .filter((t) => t.dueAt)
      .map((t) => ({ kind: t.kind, dueAt: t.dueAt!, overdue: t.overdue }));
    due.push({ kind: 'validity_end', dueAt: r.valid_to, overdue: r.valid_to.getTime() < now.getTime() });
    due.sort((a, b) => a.dueAt.getTime() - b.dueAt.getTime());
    return permitItem(r, suspendedStates.includes(r.state) ? r.suspension_reason : null, due);
  });
  liveWork.sort((a, b) => firstDue(a) - firstDue(b));

  const gasTestsDue: MyWorkGasItem<Date>[] = permits
    .filter((r) => r.gas_due)
    .flatMap((r) => {
      const gas = dueTimes(factsOf(r), now).find((t) => t.kind === 'gas_test');
      return gas?.dueAt ? [{ permit: permitRef(r, r.state), dueAt: gas.dueAt, overdue: gas.overdue }] : [];
    })
    .sort((a, b) => a.dueAt.getTime() - b.dueAt.getTime());

  // Expired, or suspended by someone other than the lead or by time running out: only an authoriser's re-validation lets work go on.
  const toRevalidate = permits
    .filter((r) => r.to_revalidate && awaitsAuthoriser(r.state, r.expired_flag, r.suspended_by_kind))
    .map((r) => permitItem(r, r.suspension_reason));

  const stepItem = (r: StepRowFacts, action: MyWorkStepAction): MyWorkStepItem => ({
    permit: permitRef(r, r.permit_state), stepId: r.id, label: r.label, kind: r.kind, condition: r.condition, action,
  });
  const fits = (r: StepRowFacts, action: StepActionName) =>
    stepActionRefusal(
      action,
      {
        kind: r.kind, status: r.status, remotelyOperable: r.remotely_operable, remoteAckAt: r.remote_ack_at, controlRoomAckAppliedAt: r.control_room_ack_applied_at,
        controlRoomAckRemovedAt: r.control_room_ack_removed_at, plugWarnings: r.plug_warnings ?? [], plugWarningsAckAt: r.plug_warnings_ack_at,
      },
      r.permit_state,
    ) === null;
  const tech = steps.filter((r) => r.as_tech);
  const stepsToApply = tech.filter((r) => fits(r, 'apply')).map((r) => stepItem(r, 'apply'));
  // The second person verifies (the database refuses a self-verification).
  const stepsToVerify = tech.filter((r) => fits(r, 'verify') && r.applied_by !== userId).map((r) => stepItem(r, 'verify'));
  // A lock or tag comes off by whoever holds it, or under an exception that names the caller (OSHA 29 CFR 1910.147(e)(3)).
  const stepsToRemove = tech
    .filter((r) => fits(r, 'remove') && (!removalNeedsException({ lockId: r.lock_id, tagId: r.tag_id, heldBy: r.held_by }, userId) || r.removal_exception))
    .map((r) => stepItem(r, 'remove'));
  const controlWhat = ['remote_inhibited', 'applied', 'removed'] as const;
  const isolationsToAcknowledge = steps
    .filter((r) => r.as_control)
    .flatMap((r) => controlWhat.filter((what) => fits(r, acknowledgementAction[what])).map((what) => stepItem(r, what)));
  const plugWarnings = steps.filter((r) => r.as_authoriser && fits(r, 'acknowledgePlugWarnings')).map((r) => stepItem(r, 'plug_warnings'));

  // A list counts only for a role the person holds (the CASL scopes already keep the rows to theirs).
  const only = <T>(held: boolean, items: T[]) => (held ? items : []);
  const lists: Record<MyWorkListKey, unknown[]> = {
    toAccept: only(roles.lead, permits.filter((r) => r.to_accept).map((r) => permitItem(r, null))),
    sentBack: only(roles.lead, permits.filter((r) => r.sent_back).map((r) => permitItem(r, r.rejection_reason))),
    liveWork: only(roles.lead, liveWork),
    stepsToApply: only(roles.technician, stepsToApply),
    stepsToVerify: only(roles.technician, stepsToVerify),
    stepsToRemove: only(roles.technician, stepsToRemove),
    gasTestsDue: only(roles.gasTester, gasTestsDue),
    toApprove: only(roles.authoriser, permits.filter((r) => r.to_approve).map((r) => permitItem(r, null))),
    plugWarnings: only(roles.authoriser, plugWarnings),
    toRevalidate: only(roles.authoriser, toRevalidate),
    isolationsToAcknowledge: only(roles.controlRoom, isolationsToAcknowledge),
    returnsToAcknowledge: only(roles.controlRoom, permits.filter((r) => r.return_ack).map((r) => permitItem(r, null))),
  };
  const counts = Object.fromEntries(myWorkListKeys.map((k) => [k, lists[k].length])) as Record<MyWorkListKey, number>;
  const cut = <T>(key: MyWorkListKey) => lists[key].slice(0, MY_WORK_LIMIT) as T[];
  return {
    lead: roles.lead ? { toAccept: cut('toAccept'), sentBack: cut('sentBack'), liveWork: cut('liveWork') } : null,
    technician: roles.technician ? { stepsToApply: cut('stepsToApply'), stepsToVerify: cut('stepsToVerify'), stepsToRemove: cut('stepsToRemove') } : null,
    gasTester: roles.gasTester ? { gasTestsDue: cut('gasTestsDue') } : null,
    authoriser: roles.authoriser ? { toApprove: cut('toApprove'), plugWarnings: cut('plugWarnings'), toRevalidate: cut('toRevalidate') } : null,
    controlRoom: roles.controlRoom ? { isolationsToAcknowledge: cut('isolationsToAcknowledge'), returnsToAcknowledge: cut('returnsToAcknowledge') } : null,
    counts,
    total: Object.values(counts).reduce((a, b) => a + b, 0),
    limit: MY_WORK_LIMIT,
    generatedAt: now,
  };
}
