import { QueryTypes } from 'sequelize';
import { pointsOutsideSection } from '@shared/isolations/section';
import { conditionForKind, type SavePlanInput } from '@shared/schemas/isolation.schema';
import type { IsolationPointKind } from '@shared/schemas/assets.schema';
import { editableStates } from '@shared/permit/states';
import { stepKindForPoint } from '@shared/isolations/step-rules';
import type { IsolationPlan, PlanProposal } from '@shared/types/isolations';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { appendAudit } from '../audit/audit.service';
import { findPermit } from '../permits/permits.repository';
import { recordPermitEditor } from '../permits/permit-editors';
import { auditActor, type CallerContext } from '../../lib/caller';
import { listSteps } from './isolation-queries';
import { planReadiness } from './isolation-plan-view';
import { asNeighbours, pointNeighbours } from './isolation-neighbours';

interface PointRow {
  id: string;
  tagCode: string;
  kind: IsolationPointKind;
  position: number;
  remotelyOperable: boolean | null;
  valveType: string | null;
}

export async function getPlan(deps: AppDeps, caller: CallerContext, permitId: string): Promise<IsolationPlan<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId), 'permit');
    const items = await listSteps(deps.sequelize, tenantId, permitId);
    const { conflicts, shared } = await pointNeighbours(deps.sequelize, tenantId, permitId);
    return { items, readiness: await planReadiness(deps.sequelize, permit, items), conflicts: asNeighbours(conflicts), shared: asNeighbours(shared) };
  });
}

async function pipelinePoints(deps: AppDeps, tenantId: string, pipelineId: string) {
  return deps.sequelize.query<PointRow>(
    `SELECT id, tag_code AS "tagCode", kind, position::float8 AS position, remotely_operable AS "remotelyOperable", valve_type AS "valveType"
     FROM isolation_points WHERE tenant_id = :tenantId AND pipeline_id = :pipelineId ORDER BY position, tag_code`,
    { replacements: { tenantId, pipelineId }, type: QueryTypes.SELECT },
  );
}

/**
 * A first plan for a cut-out between two positions: the nearest block valve on each side (never a
 * check valve: it is no isolation), the vents and drains between them (or a temporary bleed at the
 * cut when there is none, since the section must be proved dead at one), and a mud plug on each side
 * of the cut. The planner edits it before saving.
 */
export async function proposePlan(deps: AppDeps, caller: CallerContext, permitId: string, from: number, to: number): Promise<PlanProposal> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId), 'permit');
    const [pipe] = await deps.sequelize.query<{ id: number; insideDiameterIn: number }>(
      `SELECT inside_diameter_in::float8 AS "insideDiameterIn" FROM pipelines WHERE tenant_id = :tenantId AND id = :id`,
      { replacements: { tenantId, id: permit.pipelineId }, type: QueryTypes.SELECT },
    );
    const points = await pipelinePoints(deps, tenantId, permit.pipelineId);
    const valves = points.filter((p) => p.kind === 'block_valve' && p.valveType !== 'check');
    const upstream = [...valves].reverse().find((v) => v.position <= from);
    const downstream = valves.find((v) => v.position >= to);
    const warnings: string[] = [];
    if (!upstream) warnings.push('No block valve found before the start of the cut; add an isolation by hand.');
    if (!downstream) warnings.push('No block valve found after the end of the cut; add an isolation by hand.');
    const lo = upstream?.position ?? from;
    const hi = downstream?.position ?? to;
    const between = points.filter((p) => (p.kind === 'vent' || p.kind === 'drain') && p.position >= lo && p.position <= hi);
    for (const c of points.filter((p) => p.kind === 'block_valve' && p.valveType === 'check' && p.position >= lo && p.position <= hi))
      warnings.push(`${c.tagCode} is a check valve. A check valve is never an isolation, so it is left out of the plan.`);
    const steps: PlanProposal['steps'] = [];
    for (const v of [upstream, downstream]) if (v) steps.push({ pointId: v.id, kind: 'block_valve', label: v.tagCode, position: v.position });
    for (const p of between.filter((x) => x.kind === 'drain')) steps.push({ pointId: p.id, kind: 'drain', label: p.tagCode, position: p.position });
    for (const p of between.filter((x) => x.kind === 'vent')) steps.push({ pointId: p.id, kind: 'vent', label: p.tagCode, position: p.position });
    if (!between.length) {
      steps.push({ tempLabel: 'Bleed for proving', tempPosition: from, kind: 'vent', label: 'Bleed for proving', position: from });
      warnings.push('No vent or drain lies between the isolations: a temporary bleed at the cut is planned, to prove the section dead. Fit one, or add a register point instead.');
    }
    const d = pipe?.insideDiameterIn;
    steps.push({ tempLabel: 'Plug upstream of cut', tempPosition: from, kind: 'plug', plugDiameterIn: d, label: 'Plug upstream of cut', position: from });
    steps.push({ tempLabel: 'Plug downstream of cut', tempPosition: to, kind: 'plug', plugDiameterIn: d, label: 'Plug downstream of cut', position: to });
    // The same rule as the plan screen: a vent, drain or plug beyond an isolating device works on live line.
    for (const o of pointsOutsideSection(steps, { from, to })) warnings.push(o.message);
    return { steps, warnings, insideDiameterIn: d ?? null };
  });
}

/** Replaces the plan of a draft permit in one go; the plan is reviewed with the permit, so it is frozen once sent. */
export async function savePlan(deps: AppDeps, caller: CallerContext, permitId: string, input: SavePlanInput): Promise<IsolationPlan<Date>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'update', 'Permit', await findPermit(deps.sequelize, tenantId, permitId, { lock: true }), 'permit');
    if (!editableStates.includes(permit.state)) throw AppError.unprocessable('The isolation plan can only change while the permit is a draft.');
    if (permit.version !== input.version) throw AppError.conflict('Someone changed this permit in the meantime. Reload it and try again.', { current: { state: permit.state, version: permit.version } });
    const points = new Map((await pipelinePoints(deps, tenantId, permit.pipelineId)).map((p) => [p.id, p]));
    const details: { path: string; message: string }[] = [];
    input.steps.forEach((s, i) => {
      if (s.pointId) {
        const p = points.get(s.pointId);
        if (!p) details.push({ path: `steps.${i}.pointId`, message: 'That point is not on this permit’s pipeline.' });
        else if (stepKindForPoint[p.kind] !== s.kind) details.push({ path: `steps.${i}.kind`, message: `${p.tagCode} is a ${p.kind.replace(/_/g, ' ')}, not a ${s.kind.replace(/_/g, ' ')}.` });
      }
      if (s.kind === 'plug' && !s.plugDiameterIn) details.push({ path: `steps.${i}.plugDiameterIn`, message: 'Give the pipe diameter the plug fills.' });
    });
    const seen = new Set<string>();
    input.steps.forEach((s, i) => {
      if (!s.pointId) return;
      if (seen.has(s.pointId)) details.push({ path: `steps.${i}.pointId`, message: 'This point is already in the plan.' });
      seen.add(s.pointId);
    });
    if (details.length) throw AppError.validation('Some steps of the plan are not valid.', details);
    // HSE HSG253: a check valve is never relied on as an isolation.
    const checkValves = input.steps.flatMap((s, i) => {
      const p = s.pointId ? points.get(s.pointId) : undefined;
      return p?.valveType === 'check'
        ? [{ path: `steps.${i}.pointId`, message: `${p.tagCode} is a check valve. It lets product through one way and cannot be closed and locked, so it is never an isolation.` }]
        : [];
    });
    if (checkValves.length) throw AppError.unprocessable('A check valve is never an isolation: plan a block valve, a blind or a line stop instead.', checkValves);
    await deps.sequelize.query(`DELETE FROM isolation_steps WHERE tenant_id = :tenantId AND permit_id = :permitId`, { replacements: { tenantId, permitId } });
    for (const [i, s] of input.steps.entries()) {
      await deps.sequelize.query(
        `INSERT INTO isolation_steps (tenant_id, permit_id, seq, point_id, temp_label, temp_position, kind, condition, remotely_operable, plug_diameter_in)
         VALUES (:tenantId, :permitId, :seq, :pointId, :tempLabel, :tempPosition, :kind, :condition, :remote, :plugDiameterIn)`,
        {
          replacements: {
            tenantId, permitId, seq: i + 1, pointId: s.pointId ?? null, tempLabel: s.pointId ? null : s.tempLabel, tempPosition: s.pointId ? null : s.tempPosition,
            kind: s.kind, condition: conditionForKind[s.kind], remote: Boolean(s.pointId && points.get(s.pointId)?.remotelyOperable), plugDiameterIn: s.plugDiameterIn ?? null,
          },
        },
      );
    }
    // Checked on the rows just written, so the rule is the one approval and apply use; a refusal rolls them back.
    const { conflicts, shared } = await pointNeighbours(deps.sequelize, tenantId, permitId);
    if (conflicts.length)
      throw AppError.unprocessable(
        `This plan would operate points another permit holds in place: ${conflicts.map((c) => c.message).join('; ')}. Plan other points, or wait until that permit's isolations come off.`,
        conflicts.map((c) => ({ path: `steps.${c.seq - 1}.pointId`, message: `${c.message}.` })),
      );
    // The dead ends belong to the plan: saved and replaced with it.
    await deps.sequelize.query(
      `UPDATE permits SET version = version + 1, dead_end_upstream = :upstream, dead_end_downstream = :downstream, updated_at = :now WHERE tenant_id = :tenantId AND id = :permitId`,
      { replacements: { tenantId, permitId, upstream: input.deadEnds?.upstream ?? null, downstream: input.deadEnds?.downstream ?? null, now: deps.clock.now() } },
    );
    await appendAudit(deps.sequelize, {
      tenantId, entityType: 'permit', entityId: permitId, permitId, action: 'plan_saved', actor: auditActor(caller, 'update'), ip: caller.ip,
      data: { steps: input.steps.length, ...(input.deadEnds?.upstream || input.deadEnds?.downstream ? { deadEnds: input.deadEnds } : {}) }, occurredAt: deps.clock.now(),
    });
    await recordPermitEditor(deps.sequelize, tenantId, permitId, caller.user.id, deps.clock.now());
    const items = await listSteps(deps.sequelize, tenantId, permitId);
    return { items, readiness: await planReadiness(deps.sequelize, (await findPermit(deps.sequelize, tenantId, permitId))!, items), conflicts: [], shared: asNeighbours(shared) };
  });
}
