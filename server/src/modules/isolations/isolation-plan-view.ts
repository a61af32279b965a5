import { QueryTypes, type Sequelize } from 'sequelize';
import { isolatedGaps, type PermitFacts } from '@shared/permit/state-machine';
import { beforeIsolatedStates } from '@shared/permit/states';
import { signatureMissing } from '@shared/isolations/readiness';
import { inPlaceStatuses, isInPlace } from '@shared/isolations/step-rules';
import { readTenantSettings } from '@shared/schemas/tenant-settings.schema';
import type { IsolationPlanReadiness, IsolationProving } from '@shared/types/isolation-proving';
import type { PermitRow } from '../permits/permits.repository';
import { countedVerifiedSql, readinessOf } from './isolation-readiness';
import { certificateProvingIdSql, reliedCertificateSql } from '../certificates/certificate-queries';
import type { StepRow } from './isolation-queries';

/** The step counts the lifecycle guards read, from the steps already loaded (permit-facts.ts counts the same in SQL). */
function isolationCounts(steps: StepRow[]): PermitFacts['isolation'] {
  const onNow = steps.filter((s) => isInPlace(s.status));
  return {
    steps: steps.length,
    applied: onNow.length,
    verified: steps.filter((s) => counted(s)).length,
    selfVerified: steps.filter((s) => s.status === 'verified' && s.verifiedBy === s.appliedBy).length,
    remoteValvesWithoutAck: onNow.filter((s) => s.remotelyOperable && !s.remoteAckAt).length,
    stillApplied: onNow.length,
    ventsOpen: onNow.filter((s) => s.kind === 'vent').length,
    plugsInPlace: onNow.filter((s) => s.kind === 'plug').length,
    plugWarningsUnacknowledged: steps.filter((s) => s.plugWarnings.length && !s.plugWarningsAckAt && s.status !== 'removed').length,
    readiness: { devices: 0, sides: [], proving: { state: 'none', at: null, failure: null } },
  };
}

const counted = (s: StepRow) => s.status === 'verified' && s.verifiedBy !== s.appliedBy && (!s.remotelyOperable || Boolean(s.remoteAckAt));

/** A step of the certificate the permit relies on, made by another permit. */
interface CertificateStepJson {
  kind: string;
  position: number;
  inPlace: boolean;
  verified: boolean;
}

/** A hold test as json_agg writes it: times as text, with the row's insertion time for the order. */
type ProvingJson = IsolationProving<string> & { created?: string };

/**
 * Inside withTenant, one statement more than the steps: where the plan stands against Isolated
 * (devices per side, the hold tests, the signature) and, before the signature, every reason it is
 * not there yet, in the words the guard uses.
 */
export async function planReadiness(sequelize: Sequelize, permit: PermitRow, steps: StepRow[]): Promise<IsolationPlanReadiness<Date>> {
  const [row] = await sequelize.query<{
    settings: unknown; upstream: string | null; downstream: string | null; provings: ProvingJson[]; signature: { name: string; at: string } | null; cert_steps: CertificateStepJson[] | null;
  }>(
    `SELECT t.settings, p.dead_end_upstream AS upstream, p.dead_end_downstream AS downstream,
            coalesce((SELECT json_agg(x ORDER BY x.created, x."startedAt") FROM (
               SELECT pv.created_at AS created, pv.id, pv.permit_id AS "permitId", pv.step_id AS "stepId", coalesce(ip.tag_code, s.temp_label) AS at, pv.unit,
                      pv.max_pressure::float8 AS "maxPressure", pv.max_pressure_unit AS "maxPressureUnit", pv.hold_minutes AS "holdMinutes",
                      pv.start_reading::float8 AS "startReading", pv.started_at AS "startedAt", pv.started_by AS "startedBy", us.name AS "startedByName",
                      pv.started_entered_late AS "startedEnteredLate", pv.end_reading::float8 AS "endReading", pv.ended_at AS "endedAt", pv.ended_by AS "endedBy",
                      ue.name AS "endedByName", pv.ended_entered_late AS "endedEnteredLate", pv.result, pv.failure, pv.notes
               FROM isolation_provings pv
               JOIN isolation_steps s ON s.tenant_id = pv.tenant_id AND s.id = pv.step_id
               LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
               JOIN users us ON us.id = pv.started_by
               LEFT JOIN users ue ON ue.id = pv.ended_by
               WHERE pv.tenant_id = p.tenant_id AND (pv.permit_id = p.id OR pv.id = ${certificateProvingIdSql})) x), '[]'::json) AS provings,
            (SELECT json_agg(json_build_object('kind', s.kind, 'position', coalesce(ip.position, s.temp_position)::float8, 'inPlace', s.status IN (:inPlace), 'verified', ${countedVerifiedSql}))
             FROM isolation_steps s LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
             WHERE s.tenant_id = p.tenant_id AND s.permit_id <> p.id AND s.certificate_id = ${reliedCertificateSql}) AS cert_steps,
            (SELECT json_build_object('name', sg.signed_name, 'at', sg.signed_at) FROM permit_signatures sg
             WHERE sg.tenant_id = p.tenant_id AND sg.permit_id = p.id AND sg.event = 'confirm_isolated' ORDER BY sg.signed_at DESC LIMIT 1) AS signature
     FROM permits p JOIN tenants t ON t.id = p.tenant_id WHERE p.tenant_id = :tenantId AND p.id = :permitId`,
    { replacements: { tenantId: permit.tenantId, permitId: permit.id, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
  );
  const settings = readTenantSettings(row?.settings);
  const provings: IsolationProving<Date>[] = (row?.provings ?? []).map(({ created: _created, ...p }) => ({
    ...p,
    startedAt: new Date(p.startedAt),
    endedAt: p.endedAt ? new Date(p.endedAt) : null,
  }));
  const latest = provings.at(-1);
  // A permit relying on another permit's isolation certificate counts that certificate's isolations too (HSE HSG250).
  const certSteps = row?.cert_steps ?? [];
  const readiness = readinessOf(
    { from: Number(permit.fromPosition), to: Number(permit.toPosition) },
    { upstream: row?.upstream ?? null, downstream: row?.downstream ?? null },
    [...steps.map((s) => ({ kind: s.kind, position: s.position, verified: counted(s) })), ...certSteps],
    latest ? { result: latest.result, failure: latest.failure, at: latest.at } : null,
  );
  const signature = row?.signature ? { name: row.signature.name, at: new Date(row.signature.at) } : null;
  const waiting = !signature && beforeIsolatedStates.includes(permit.state);
  const own = isolationCounts(steps);
  const counts = { ...own, steps: own.steps + certSteps.length, applied: own.applied + certSteps.filter((c) => c.inPlace).length, verified: own.verified + certSteps.filter((c) => c.verified).length };
  const blockers = waiting ? [...isolatedGaps({ isolation: { ...counts, readiness } }), signatureMissing] : [];
  return {
    ...readiness,
    provings,
    limits: { maxPressure: settings.provingMaxPressure, unit: settings.provingPressureUnit, holdMinutes: settings.provingHoldMinutes },
    signature,
    blockers,
  };
}
