import { QueryTypes, type Sequelize } from 'sequelize';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import { sidesClosedBy, type WorkSide } from '@shared/isolations/readiness';
import { checkKindLabels, plugFaceLabels, type CheckKind } from '@shared/schemas/timed-checks.schema';
import type { GasTestPlace } from '@shared/schemas/gas-tests.schema';
import type { StopWorkFacts } from '@shared/permit/stop-work';
import { formatInZone } from '@shared/time/zone';

interface Row {
  time_zone: string;
  failed: { kind: CheckKind; at: string; label: string | null; observation: Record<string, unknown> }[] | null;
  plugs: { position: number; applied_at: string | null; checked_at: string | null }[] | null;
  from_position: number;
  to_position: number;
  places: { place: GasTestPlace; pass: string | null; fail: string | null }[] | null;
  fire_clear: Date | null;
}

/** What a failed vent or plug check found, in words. */
export function checkProblem(kind: CheckKind, o: Record<string, unknown>): string {
  if (kind === 'plug') return `the plug ${String(plugFaceLabels[o.face as keyof typeof plugFaceLabels] ?? o.face).toLowerCase()}`;
  const found = [o.vapourAwayFromWork === false ? 'vapour toward the work' : null, o.pressureBuilding === true ? 'pressure building' : null].filter(Boolean);
  return found.join(' and ') || 'a problem';
}

/**
 * The facts of the stop-work rules (shared/permit/stop-work.ts) for one permit, in one statement:
 * unresolved failed vent and plug checks (a failed check is resolved only by a later passing check
 * of the same vent or plug, or of all of them, while it is still in place), when each plug in place
 * was last found right, the latest pass and fail per gas-test place, and the fire watch's last clear check.
 */
export async function loadStopWorkFacts(sequelize: Sequelize, tenantId: string, permitId: string): Promise<StopWorkFacts> {
  const [row] = await sequelize.query<Row>(
    `SELECT t.time_zone, p.from_position::float8 AS from_position, p.to_position::float8 AS to_position,
       (SELECT json_agg(json_build_object('kind', c.kind, 'at', c.checked_at, 'label', coalesce(ip.tag_code, s.temp_label), 'observation', c.observation) ORDER BY c.checked_at)
          FROM permit_checks c
          LEFT JOIN isolation_steps s ON s.tenant_id = c.tenant_id AND s.id = c.isolation_step_id
          LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         WHERE c.tenant_id = p.tenant_id AND c.permit_id = p.id AND c.kind IN ('vent', 'plug') AND NOT c.ok
           AND (c.isolation_step_id IS NULL OR s.status IN (:inPlace))
           AND EXISTS (SELECT 1 FROM isolation_steps x WHERE x.tenant_id = c.tenant_id AND x.permit_id = c.permit_id AND x.kind = c.kind AND x.status IN (:inPlace))
           AND NOT EXISTS (SELECT 1 FROM permit_checks l WHERE l.tenant_id = c.tenant_id AND l.permit_id = c.permit_id AND l.kind = c.kind AND l.ok
                             AND (l.isolation_step_id IS NULL OR l.isolation_step_id = c.isolation_step_id) AND l.checked_at > c.checked_at)) AS failed,
       (SELECT json_agg(json_build_object('position', coalesce(ip.position, s.temp_position)::float8, 'applied_at', s.applied_at,
                 'checked_at', (SELECT max(c.checked_at) FROM permit_checks c WHERE c.tenant_id = s.tenant_id AND c.permit_id = s.permit_id AND c.kind = 'plug' AND c.ok
                                  AND (c.isolation_step_id IS NULL OR c.isolation_step_id = s.id))))
          FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
         WHERE s.tenant_id = p.tenant_id AND s.permit_id = p.id AND s.kind = 'plug' AND s.status IN (:inPlace)) AS plugs,
       (SELECT json_agg(json_build_object('place', g.place, 'pass', g.pass, 'fail', g.fail)) FROM (
          SELECT place, max(tested_at) FILTER (WHERE verdict = 'pass') AS pass, max(tested_at) FILTER (WHERE verdict = 'fail') AS fail
            FROM gas_tests WHERE tenant_id = p.tenant_id AND permit_id = p.id GROUP BY place) g) AS places,
       (SELECT max(checked_at) FROM permit_checks WHERE tenant_id = p.tenant_id AND permit_id = p.id AND kind = 'fire_watch' AND ok) AS fire_clear
     FROM permits p JOIN tenants t ON t.id = p.tenant_id
     WHERE p.tenant_id = :tenantId AND p.id = :permitId`,
    { replacements: { tenantId, permitId, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
  );
  const d = (v: string | Date | null | undefined) => (v ? new Date(v) : null);
  const timeZone = row.time_zone;
  const plugs = row.plugs ?? [];
  // Each plug counts from its last passing check, or from when it was built; the oldest decides.
  const since = plugs.map((p) => Math.max(d(p.applied_at)?.getTime() ?? 0, d(p.checked_at)?.getTime() ?? 0)).filter((t) => t > 0);
  const plugSides = new Set<WorkSide>(plugs.flatMap((p) => sidesClosedBy(p.position, { from: row.from_position, to: row.to_position })));
  return {
    timeZone,
    failedChecks: (row.failed ?? []).map(
      (c) => `${checkKindLabels[c.kind]}${c.label ? ` of ${c.label}` : ''} on ${formatInZone(c.at, timeZone)} found ${checkProblem(c.kind, c.observation)}`,
    ),
    plugsInPlace: plugs.length,
    plugsCheckedAt: since.length ? new Date(Math.min(...since)) : null,
    plugSides: [...plugSides],
    gasPlaces: (row.places ?? []).map((g) => ({ place: g.place, lastPassAt: d(g.pass), lastFailAt: d(g.fail) })),
    fireWatchClearAt: d(row.fire_clear),
  };
}
