import { QueryTypes } from 'sequelize';
import { dueTimes } from '@shared/permit/due-times';
import { liveStates, workUnderWayStates } from '@shared/permit/states';
import { isInPlace } from '@shared/isolations/step-rules';
import { checkKindLabels, type CheckData, type CheckKind } from '@shared/schemas/timed-checks.schema';
import type { CheckRow, RecordedCheck } from '@shared/types/timed-checks';
import type { Page } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { appendAudit } from '../audit/audit.service';
import { notifyChange } from '../isolations/isolation-queries';
import { auditActor, type CallerContext } from '../../lib/caller';
import { dueFactsFor, resolveOverdue } from './gas-tests.repository';
import { checkObservedTime, observationBounds } from '../permits/observed-time';
import { permitFor, requireWorkOpen } from './permit-access';
import { queueAlert } from './alert-mail';
import { suspendForStopWork } from './stop-work';
import { checkProblem } from '../permits/stop-work-facts';

const checkSelect = `
  SELECT c.id, c.kind, c.checked_at AS "checkedAt", c.ok, c.observation, c.action_taken AS "actionTaken", c.notes,
         c.isolation_step_id AS "isolationStepId", coalesce(ip.tag_code, s.temp_label) AS "stepLabel", u.name AS "recordedByName", c.entered_late AS "enteredLate"
  FROM permit_checks c
  JOIN users u ON u.id = c.recorded_by
  LEFT JOIN isolation_steps s ON s.tenant_id = c.tenant_id AND s.id = c.isolation_step_id
  LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id`;

export async function listChecks(deps: AppDeps, caller: CallerContext, permitId: string, q: { page: number; pageSize: number; kind?: CheckKind }): Promise<Page<CheckRow<Date>>> {
  return withTenant(deps.sequelize, caller.actor.tenantId, async () => {
    await permitFor(deps, caller, permitId, { action: 'read', type: 'Check', what: 'checks of this permit' });
    const r = { tenantId: caller.actor.tenantId, permitId, kind: q.kind ?? null, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
    const where = `c.tenant_id = :tenantId AND c.permit_id = :permitId AND (CAST(:kind AS text) IS NULL OR c.kind = CAST(:kind AS text))`;
    const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM permit_checks c WHERE ${where}`, { replacements: r, type: QueryTypes.SELECT });
    const items = await deps.sequelize.query<CheckRow<Date>>(`${checkSelect} WHERE ${where} ORDER BY c.checked_at DESC, c.id LIMIT :limit OFFSET :offset`, { replacements: r, type: QueryTypes.SELECT });
    return { items, total: n, page: q.page, pageSize: q.pageSize };
  });
}

function observationOf(input: CheckData): { ok: boolean; observation: Record<string, unknown>; summary: string } {
  switch (input.kind) {
    case 'vent': {
      const pressure = input.pressureReading !== undefined ? `, ${input.pressureReading} ${input.pressureUnit}` : '';
      return {
        ok: input.vapourAwayFromWork && !input.pressureBuilding,
        observation: { vapourAwayFromWork: input.vapourAwayFromWork, pressureBuilding: input.pressureBuilding, pressureReading: input.pressureReading ?? null, pressureUnit: input.pressureUnit ?? null },
        summary: `${input.vapourAwayFromWork ? 'vapour directed away from the work' : 'VAPOUR TOWARD THE WORK'}; ${input.pressureBuilding ? 'PRESSURE BUILDING' : 'no pressure building'}${pressure}`,
      };
    }
    case 'plug':
      return { ok: input.face === 'intact', observation: { face: input.face }, summary: input.face === 'intact' ? 'plug face intact' : `PLUG FACE ${input.face.toUpperCase()}` };
    case 'fire_watch':
      return { ok: input.observation === 'clear', observation: { observation: input.observation }, summary: input.observation === 'clear' ? 'area clear' : 'HOT SPOT OR SMOULDERING FOUND' };
  }
}

/** Records a vent, plug or fire-watch check. A check that finds a problem needs the action taken, and is mailed to the lead and authoriser. */
export async function recordCheck(deps: AppDeps, caller: CallerContext, permitId: string, input: CheckData): Promise<RecordedCheck<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = await permitFor(deps, caller, permitId, { action: 'record', type: 'Check', what: 'checks' }, { lock: true });
    if (input.kind === 'fire_watch') {
      if (!permit.kinds.includes('hot_work')) throw AppError.unprocessable('This permit has no hot work, so there is no fire watch to record.');
      requireWorkOpen(permit, 'Fire-watch checks', workUnderWayStates);
      if (input.isolationStepId) throw AppError.validation('A fire-watch check is not about an isolation step.', [{ path: 'isolationStepId', message: 'Leave this out for a fire watch.' }]);
    } else requireWorkOpen(permit, `${checkKindLabels[input.kind]}s`);
    const bounds = await observationBounds(deps, permit);
    const { enteredLate } = checkObservedTime(bounds, new Date(input.checkedAt), 'checkedAt');
    if (input.isolationStepId) {
      const [step] = await deps.sequelize.query<{ kind: string; status: string }>(`SELECT kind, status FROM isolation_steps WHERE tenant_id = :tenantId AND permit_id = :permitId AND id = :id`, {
        replacements: { tenantId, permitId, id: input.isolationStepId },
        type: QueryTypes.SELECT,
      });
      if (!step || step.kind !== input.kind || !isInPlace(step.status))
        throw AppError.validation(`Choose a ${input.kind} of this permit's isolation plan that is in place.`, [{ path: 'isolationStepId', message: `Not a ${input.kind} in place on this permit.` }]);
    }
    const { ok, observation, summary } = observationOf(input);
    const now = deps.clock.now();
    const [{ id }] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO permit_checks (tenant_id, permit_id, kind, isolation_step_id, checked_at, ok, observation, action_taken, notes, recorded_by, entered_late, created_at)
       VALUES (:tenantId, :permitId, :kind, :stepId, :checkedAt, :ok, CAST(:observation AS jsonb), :action, :notes, :userId, :enteredLate, :now) RETURNING id`,
      {
        replacements: {
          tenantId, permitId, kind: input.kind, stepId: input.isolationStepId ?? null, checkedAt: input.checkedAt, ok, observation: JSON.stringify(observation),
          action: input.actionTaken?.trim() || null, notes: input.notes ?? null, userId: caller.user.id, enteredLate, now,
        },
        type: QueryTypes.SELECT,
      },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'check', entityId: id, permitId, action: `${input.kind}_check_recorded`, actor: auditActor(caller, 'record'), ip: caller.ip,
      reason: ok ? null : `${summary}. Action: ${input.actionTaken}`, data: { ok, ...observation, checkedAt: input.checkedAt, ...(enteredLate ? { enteredLate } : {}) }, occurredAt: now,
    });
    const due = dueTimes(await dueFactsFor(deps.sequelize, permit, bounds.settings), now).find((t) => t.kind === input.kind);
    if (!due?.overdue) await resolveOverdue(deps.sequelize, tenantId, permitId, input.kind, now);
    if (!ok)
      await queueAlert(deps.sequelize, permit, {
        key: `check-problem:${tenantId}:${id}`,
        subject: `${checkKindLabels[input.kind].toLowerCase()} found a problem`,
        lines: [`${caller.user.name} recorded a ${checkKindLabels[input.kind].toLowerCase()} on permit ${permit.number} (${permit.title}): ${summary}.`, `Action taken: ${input.actionTaken}`],
        publicUrl: deps.config.PUBLIC_URL,
      });
    // A vent blowing toward the work or a plug that has cracked, shrunk or moved stops live work at once, as a failing gas test does.
    let permitState = permit.state;
    if (!ok && input.kind !== 'fire_watch' && liveStates.includes(permit.state)) {
      const reason = `${checkKindLabels[input.kind]} found ${checkProblem(input.kind, observation)} (${caller.user.name}). Action: ${input.actionTaken}`;
      permitState = (await suspendForStopWork(deps, permit, reason, `failed ${input.kind} check`)).state;
    }
    await notifyChange(deps.sequelize, { tenantId, kind: 'check', id: permitId, check: input.kind, ok });
    const [row] = await deps.sequelize.query<CheckRow<Date>>(`${checkSelect} WHERE c.tenant_id = :tenantId AND c.id = :id`, { replacements: { tenantId, id }, type: QueryTypes.SELECT });
    return { ...row, permitState };
  });
}
