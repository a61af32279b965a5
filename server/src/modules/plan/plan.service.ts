import { QueryTypes } from 'sequelize';
import type { PlanQuery } from '@shared/schemas/plan.schema';
import type { PlanAnswer, PlanOption, PlanOverlap, PlanPermit } from '@shared/types/plan';
import { notPlannedStates, workOverlapStates } from '@shared/permit/states';
import { statesFrom } from '@shared/permit/state-machine';
import { addDays, siteDay, startOfSiteDay } from '@shared/time/zone';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { authorizeType } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { loadTenantSettings } from '../tenants/tenant-settings';

/** The most permits one answer lists; the rest are counted. A timeline of more is no longer readable. */
export const planPermitLimit = 1000;
/** The most meetings of two permits one answer lists. */
const overlapLimit = 2000;
const daysBack = 7;
const daysAhead = 14;


interface PermitRow extends PlanPermit<Date> {
  total: number;
}
interface OverlapRow {
  kind: PlanOverlap['kind'];
  first: PlanOverlap['first'];
  second: PlanOverlap['second'];
  pipelineId: string;
  pipelineName: string;
  fromPosition: number;
  toPosition: number;
  pointLabel: string | null;
  from: Date;
  to: Date;
}

/**
 * The permits whose validity window meets [from, to), by pipeline and position, with every pair of
 * them that meets: work ranges overlapping on one pipeline, or an isolation planned or in place on
 * the same point, while both windows are open (simultaneous operations, HSE HSG250). Pairs count only
 * between permits sent for approval and not yet handed back, the same states the permit page warns
 * about (`workOverlapStates`). The contractor filter narrows the permits listed, never the pairs:
 * another contractor's permit on the same stretch is what the meeting has to see. Served by
 * `permits_plan_window_idx` (migration 0220).
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
      notPlanned: notPlannedStates, awaitingApproval: statesFrom('approve'), active: workOverlapStates, permitLimit: planPermitLimit, overlapLimit,
    };
    const window = `
      win AS (
        SELECT p.id, p.number, p.title, p.state, p.pipeline_id, p.contractor_organisation_id, p.from_position, p.to_position, p.valid_from, p.valid_to,
               p.state IN (:active) AS active
        FROM permits p
        WHERE p.tenant_id = :tenantId AND p.valid_to > :from AND p.valid_from < :to AND p.state NOT IN (:notPlanned)
          AND (CAST(:pipelineId AS uuid) IS NULL OR p.pipeline_id = CAST(:pipelineId AS uuid))),
      shown AS (SELECT * FROM win WHERE CAST(:contractorId AS uuid) IS NULL OR contractor_organisation_id = CAST(:contractorId AS uuid)),
      ranges AS (
        SELECT a.id AS a_id, b.id AS b_id, a.pipeline_id, greatest(a.from_position, b.from_position) AS from_pos, least(a.to_position, b.to_position) AS to_pos,
               greatest(a.valid_from, b.valid_from) AS t_from, least(a.valid_to, b.valid_to) AS t_to
        FROM win a JOIN win b ON b.pipeline_id = a.pipeline_id AND a.id < b.id
          AND a.from_position <= b.to_position AND b.from_position <= a.to_position
          AND a.valid_from < b.valid_to AND b.valid_from < a.valid_to
        WHERE a.active AND b.active),
      steps AS (
        SELECT DISTINCT s.permit_id, s.point_id FROM isolation_steps s JOIN win w ON w.id = s.permit_id
        WHERE s.tenant_id = :tenantId AND w.active AND s.status <> 'removed' AND s.point_id IS NOT NULL),
      points AS (
        SELECT a.id AS a_id, b.id AS b_id, sa.point_id, greatest(a.valid_from, b.valid_from) AS t_from, least(a.valid_to, b.valid_to) AS t_to
        FROM steps sa JOIN steps sb ON sb.point_id = sa.point_id AND sa.permit_id < sb.permit_id
        JOIN win a ON a.id = sa.permit_id JOIN win b ON b.id = sb.permit_id
        WHERE a.valid_from < b.valid_to AND b.valid_from < a.valid_to),
      range_counts AS (SELECT id, count(*)::int AS n FROM (SELECT a_id AS id FROM ranges UNION ALL SELECT b_id FROM ranges) x GROUP BY id),
      point_counts AS (
        SELECT id, count(DISTINCT other)::int AS n FROM (SELECT a_id AS id, b_id AS other FROM points UNION ALL SELECT b_id, a_id FROM points) x GROUP BY id)`;

    const permits = await sequelize.query<PermitRow>(
      `WITH ${window}
       SELECT s.id, s.number, s.title, s.state, s.pipeline_id AS "pipelineId", pl.name AS "pipelineName",
              s.contractor_organisation_id AS "contractorId", o.name AS "contractorName",
              s.from_position::float8 AS "fromPosition", s.to_position::float8 AS "toPosition", s.valid_from AS "validFrom", s.valid_to AS "validTo",
              s.state IN (:awaitingApproval) AS "awaitingApproval",
              coalesce(rc.n, 0) AS "workOverlaps", coalesce(pc.n, 0) AS "sharedPoints",
              count(*) OVER ()::int AS total
       FROM shown s
       LEFT JOIN range_counts rc ON rc.id = s.id
       LEFT JOIN point_counts pc ON pc.id = s.id
       JOIN pipelines pl ON pl.tenant_id = :tenantId AND pl.id = s.pipeline_id
       JOIN organisations o ON o.tenant_id = :tenantId AND o.id = s.contractor_organisation_id
       ORDER BY pl.name, s.from_position, s.valid_from, s.number
       LIMIT :permitLimit`,
      { replacements, type: QueryTypes.SELECT },
    );

    const ref = (alias: string) =>
      `jsonb_build_object('id', ${alias}.id, 'number', ${alias}.number, 'title', ${alias}.title, 'contractorName', (SELECT name FROM organisations WHERE tenant_id = :tenantId AND id = ${alias}.contractor_organisation_id))`;
    const overlaps = await sequelize.query<OverlapRow>(
      `WITH ${window},
       pairs AS (
         SELECT 'work_range' AS kind, r.a_id, r.b_id, r.pipeline_id, r.from_pos::float8 AS from_pos, r.to_pos::float8 AS to_pos, NULL::text AS label, r.t_from, r.t_to FROM ranges r
         UNION ALL
         SELECT 'shared_point', pt.a_id, pt.b_id, ip.pipeline_id, ip.position::float8, ip.position::float8, ip.tag_code, pt.t_from, pt.t_to
         FROM points pt JOIN isolation_points ip ON ip.tenant_id = :tenantId AND ip.id = pt.point_id)
       SELECT x.kind, ${ref('a')} AS first, ${ref('b')} AS second, x.pipeline_id AS "pipelineId", pl.name AS "pipelineName",
              x.from_pos AS "fromPosition", x.to_pos AS "toPosition", x.label AS "pointLabel", x.t_from AS "from", x.t_to AS "to"
       FROM pairs x
       JOIN win a ON a.id = x.a_id JOIN win b ON b.id = x.b_id
       JOIN pipelines pl ON pl.tenant_id = :tenantId AND pl.id = x.pipeline_id
       WHERE x.a_id IN (SELECT id FROM shown) OR x.b_id IN (SELECT id FROM shown)
       ORDER BY pl.name, x.from_pos, x.t_from, a.number, b.number
       LIMIT :overlapLimit`,
      { replacements, type: QueryTypes.SELECT },
    );

    const pipelines = await sequelize.query<PlanOption>(`SELECT id, name FROM pipelines WHERE tenant_id = :tenantId ORDER BY name`, { replacements, type: QueryTypes.SELECT });
    const contractors = await sequelize.query<PlanOption>(`SELECT id, name FROM organisations WHERE tenant_id = :tenantId AND kind = 'contractor' ORDER BY name`, {
      replacements,
      type: QueryTypes.SELECT,
    });

    const total = permits[0]?.total ?? 0;
    return {
      from,
      to,
      timeZone,
      permits: permits.map(({ total: _total, ...p }) => p),
      more: Math.max(0, total - permits.length),
      overlaps,
      pipelines,
      contractors,
      generatedAt: clock.now(),
    };
  });
}
