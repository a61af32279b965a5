import { QueryTypes } from 'sequelize';
import { planOverlapsPerPermit, type PlanQuery } from '@shared/schemas/plan.schema';
import type { PlanAnswer, PlanOption, PlanOverlap, PlanPermit, PlanPermitRef } from '@shared/types/plan';
import { notPlannedStates, workOverlapStates } from '@shared/permit/states';
import { statesFrom } from '@shared/permit/state-machine';
import { addDays, siteDay, startOfSiteDay } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { findMeetings, type MeetingPermit } from './plan-meetings';

/** The most permits one answer lists; the rest are counted. A timeline of more is no longer readable. */
export const planPermitLimit = 1000;
/** The most meetings of two permits one answer lists; the rest are counted. */
export const planOverlapLimit = 2000;
const daysBack = 7;
const daysAhead = 14;

type PermitRow = Omit<PlanPermit<Date>, 'workOverlaps' | 'sharedPoints'> & { total: number };
interface PointRow {
  id: string;
  pipelineId: string;
  position: number;
  tagCode: string;
}

/**
 * The permits whose validity window meets [from, to), by pipeline and position, with where they meet:
 * work ranges overlapping on one pipeline, or an isolation planned or in place on the same point, while
 * both windows are open (simultaneous operations, HSE HSG250). Meetings count only between permits sent
 * for approval and not yet handed back, the same states the permit page warns about (`workOverlapStates`).
 * The contractor filter narrows the permits listed, never the meetings: another contractor's permit on
 * the same stretch is what the meeting has to see. Each permit carries the count of the permits it meets;
 * the meetings listed are, per permit, those with the first `planOverlapsPerPermit` by number, the rest
 * counted (`plan-meetings.ts` finds them). Served by `permits_plan_window_idx` (migration 0220).
 */
export async function planFor(deps: AppDeps, caller: CallerContext, q: PlanQuery): Promise<PlanAnswer<Date>> {
  const { tenantId } = caller.actor;
  authorizeType(caller.ability, 'read', 'Board', { tenantId }, 'the week ahead');
  const { sequelize, clock } = deps;
  return withTenant(sequelize, tenantId, async () => {
    const { timeZone } = await loadTenantSettings(sequelize, tenantId);
    const today = siteDay(clock.now(), timeZone);
    const from = q.from ? new Date(q.from) : startOfSiteDay(addDays(today, -daysBack), timeZone);
    const to = q.to ? new Date(q.to) : startOfSiteDay(addDays(today, daysAhead), timeZone);
    const replacements = {
      tenantId, from, to, pipelineId: q.pipelineId ?? null, contractorId: q.contractorId ?? null,
      notPlanned: notPlannedStates, awaitingApproval: statesFrom('approve'), active: workOverlapStates, permitLimit: planPermitLimit,
    };
    const inWindow = `p.tenant_id = :tenantId AND p.valid_to > :from AND p.valid_from < :to
          AND (CAST(:pipelineId AS uuid) IS NULL OR p.pipeline_id = CAST(:pipelineId AS uuid))`;

    // The permits that can meet: where and when each one works (the window as PostgreSQL compares it, in
    // microseconds) and the points it isolates, read per permit through its steps' index.
    const meeting = await sequelize.query<MeetingPermit>(
      `SELECT p.id, p.number, p.pipeline_id AS "pipelineId", p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition",
              (extract(epoch FROM p.valid_from) * 1000000)::float8 AS "validFrom", (extract(epoch FROM p.valid_to) * 1000000)::float8 AS "validTo",
              (CAST(:contractorId AS uuid) IS NULL OR p.contractor_organisation_id = CAST(:contractorId AS uuid)) AS shown,
              ARRAY(SELECT DISTINCT s.point_id FROM isolation_steps s
                    WHERE s.tenant_id = p.tenant_id AND s.permit_id = p.id AND s.status <> 'removed' AND s.point_id IS NOT NULL) AS "pointIds"
       FROM permits p WHERE ${inWindow} AND p.state IN (:active)`,
      { replacements, type: QueryTypes.SELECT },
    );
    const meetings = findMeetings(meeting, planOverlapsPerPermit);
    const counts = new Map(meeting.map((p, i) => [p.id, { workOverlaps: meetings.workOverlaps[i], sharedPoints: meetings.sharedPoints[i] }]));

    const permits = await sequelize.query<PermitRow>(
      // The names come from scalar subqueries rather than joins: joined, the planner walks the pipelines in
      // name order hoping to stop early at the limit, and compares every permit with every pipeline.
      `SELECT p.id, p.number, p.title, p.state, p.pipeline_id AS "pipelineId",
              (SELECT name FROM pipelines WHERE tenant_id = :tenantId AND id = p.pipeline_id) AS "pipelineName",
              p.contractor_organisation_id AS "contractorId",
              (SELECT name FROM organisations WHERE tenant_id = :tenantId AND id = p.contractor_organisation_id) AS "contractorName",
              p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition", p.valid_from AS "validFrom", p.valid_to AS "validTo",
              p.state IN (:awaitingApproval) AS "awaitingApproval",
              count(*) OVER ()::int AS total
       FROM permits p
       WHERE ${inWindow} AND p.state NOT IN (:notPlanned)
         AND (CAST(:contractorId AS uuid) IS NULL OR p.contractor_organisation_id = CAST(:contractorId AS uuid))
       ORDER BY "pipelineName", p.from_position, p.valid_from, p.number
       LIMIT :permitLimit`,
      { replacements, type: QueryTypes.SELECT },
    );

    const pipelines = await sequelize.query<PlanOption>(`SELECT id, name FROM pipelines WHERE tenant_id = :tenantId ORDER BY name`, { replacements, type: QueryTypes.SELECT });
    const contractors = await sequelize.query<PlanOption>(`SELECT id, name FROM organisations WHERE tenant_id = :tenantId AND kind = 'contractor' ORDER BY name`, {
      replacements,
      type: QueryTypes.SELECT,
    });

    const overlaps = await listOverlaps(deps, tenantId, meeting, meetings.listed, pipelines);
    const total = permits[0]?.total ?? 0;
    return {
      from,
      to,
      timeZone,
      permits: permits.map(({ total: _total, ...p }) => ({ ...p, workOverlaps: counts.get(p.id)?.workOverlaps ?? 0, sharedPoints: counts.get(p.id)?.sharedPoints ?? 0 })),
      more: Math.max(0, total - permits.length),
      overlaps,
      overlapsMore: meetings.total - overlaps.length,
      pipelines,
      contractors,
      generatedAt: clock.now(),
    };
  });
}

/**
 * The meetings to list, in words' order: by pipeline, along the line, by time, then by the two numbers;
 * at most `planOverlapLimit`. Names and points are read only for the meetings listed.
 */
async function listOverlaps(
  deps: AppDeps,
  tenantId: string,
  permits: readonly MeetingPermit[],
  listed: ReturnType<typeof findMeetings>['listed'],
  pipelines: readonly PlanOption[],
): Promise<PlanOverlap<Date>[]> {
  if (!listed.length) return [];
  const { sequelize } = deps;
  const pointIds = [...new Set(listed.flatMap((m) => (m.pointId ? [m.pointId] : [])))];
  const points = new Map(
    (pointIds.length
      ? await sequelize.query<PointRow>(
          `SELECT id, pipeline_id AS "pipelineId", position::float8 AS position, tag_code AS "tagCode" FROM isolation_points WHERE tenant_id = :tenantId AND id IN (:pointIds)`,
          { replacements: { tenantId, pointIds }, type: QueryTypes.SELECT },
        )
      : []
    ).map((p) => [p.id, p]),
  );
  const lineName = new Map(pipelines.map((p) => [p.id, p.name]));
  const at = (us: number) => new Date(Math.trunc(us / 1000));
  const candidates = listed.map((m) => {
    const a = permits[m.first];
    const b = permits[m.second];
    const point = m.pointId ? points.get(m.pointId) : undefined;
    const pipelineId = point ? point.pipelineId : a.pipelineId;
    return {
      m,
      pipelineId,
      pipelineName: lineName.get(pipelineId) ?? '',
      fromPosition: point ? point.position : Math.max(a.fromPosition, b.fromPosition),
      toPosition: point ? point.position : Math.min(a.toPosition, b.toPosition),
      pointLabel: point ? point.tagCode : null,
      from: Math.max(a.validFrom, b.validFrom),
      to: Math.min(a.validTo, b.validTo),
      numbers: [a.number, b.number] as const,
    };
  });
  const text = (x: string, y: string) => (x < y ? -1 : x > y ? 1 : 0);
  candidates.sort(
    (x, y) =>
      text(x.pipelineName, y.pipelineName) ||
      x.fromPosition - y.fromPosition ||
      x.from - y.from ||
      text(x.numbers[0], y.numbers[0]) ||
      text(x.numbers[1], y.numbers[1]) ||
      text(x.pointLabel ?? '', y.pointLabel ?? ''),
  );
  const chosen = candidates.slice(0, planOverlapLimit);
  const ids = [...new Set(chosen.flatMap(({ m }) => [permits[m.first].id, permits[m.second].id]))];
  const refs = new Map(
    (
      await sequelize.query<PlanPermitRef>(
        `SELECT p.id, p.number, p.title, o.name AS "contractorName" FROM permits p
         JOIN organisations o ON o.tenant_id = p.tenant_id AND o.id = p.contractor_organisation_id
         WHERE p.tenant_id = :tenantId AND p.id IN (:ids)`,
        { replacements: { tenantId, ids }, type: QueryTypes.SELECT },
      )
    ).map((r) => [r.id, r]),
  );
  const ref = (i: number): PlanPermitRef => refs.get(permits[i].id)!;
  return chosen.map((c) => ({
    kind: c.m.kind,
    first: ref(c.m.first),
    second: ref(c.m.second),
    pipelineId: c.pipelineId,
    pipelineName: c.pipelineName,
    fromPosition: c.fromPosition,
    toPosition: c.toPosition,
    pointLabel: c.pointLabel,
    from: at(c.from),
    to: at(c.to),
  }));
}
