import { certificateProvingIdSql, countedStepSql } from '../certificates/certificate-queries';
import { coverSides, isIsolatingKind, type CoverageStep, type DeadEnds, type IsolationReadiness, type ProvingState, type WorkRange } from '@shared/isolations/readiness';

/** A step counts as verified only when a second person verified it and a remote valve's remote operation is inhibited. */
export const countedVerifiedSql = `(s.status = 'verified' AND s.verified_by IS DISTINCT FROM s.applied_by AND (NOT s.remotely_operable OR s.remote_ack_at IS NOT NULL))`;

export interface LatestProving {
  result: Exclude<ProvingState, 'none'>;
  failure: string | null;
  at: string;
}

export function readinessOf(range: WorkRange, deadEnds: DeadEnds, steps: readonly CoverageStep[], latest: LatestProving | null | undefined): IsolationReadiness & { deadEnds: DeadEnds } {
  return {
    devices: steps.filter((s) => isIsolatingKind(s.kind)).length,
    sides: coverSides(steps, range, deadEnds),
    proving: latest ? { state: latest.result, at: latest.at, failure: latest.failure } : { state: 'none', at: null, failure: null },
    deadEnds,
  };
}

/**
 * A scalar subquery (replacements :tenantId and :permitId) giving, as one JSON object, the plan's steps
 * beside the work range and its dead ends, and the latest hold test of the section (insertion order:
 * a new test starts only once the last has ended). Callers fold it into a statement they already send.
 * A permit relying on another permit's isolation certificate counts that certificate's steps and the
 * hold test that proved its section (HSE HSG250: the permit cross-references the certificate).
 */
export const readinessSql = `(SELECT json_build_object(
    'from', p.from_position::float8, 'to', p.to_position::float8, 'upstream', p.dead_end_upstream, 'downstream', p.dead_end_downstream,
    'steps', coalesce((SELECT json_agg(json_build_object('kind', s.kind, 'position', coalesce(ip.position, s.temp_position)::float8, 'verified', ${countedVerifiedSql}))
                       FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
                       WHERE s.tenant_id = p.tenant_id AND ${countedStepSql('s.')}), '[]'::json),
    'latest', (SELECT json_build_object('result', pr.result, 'failure', pr.failure, 'at', coalesce(bp.tag_code, b.temp_label))
               FROM isolation_provings pr
               JOIN isolation_steps b ON b.tenant_id = pr.tenant_id AND b.id = pr.step_id
               LEFT JOIN isolation_points bp ON bp.tenant_id = b.tenant_id AND bp.id = b.point_id
               WHERE pr.tenant_id = p.tenant_id AND (pr.permit_id = p.id OR pr.id = ${certificateProvingIdSql}) ORDER BY pr.created_at DESC, pr.started_at DESC LIMIT 1))
  FROM permits p WHERE p.tenant_id = :tenantId AND p.id = :permitId)`;

export interface ReadinessJson {
  from: number;
  to: number;
  upstream: string | null;
  downstream: string | null;
  steps: CoverageStep[];
  latest: LatestProving | null;
}

/** What readinessSql gave, as the guards read it. */
export function readinessFromJson(row: ReadinessJson | null | undefined) {
  return readinessOf({ from: row?.from ?? 0, to: row?.to ?? 0 }, { upstream: row?.upstream ?? null, downstream: row?.downstream ?? null }, row?.steps ?? [], row?.latest);
}
