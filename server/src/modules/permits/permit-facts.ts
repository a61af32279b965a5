import { QueryTypes, type Sequelize } from 'sequelize';
import type { ActorFacts, PermitCertificateFacts, PermitFacts } from '@shared/permit/state-machine';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import type { Actor } from '@shared/abilities/define-ability';
import { siteDay } from '@shared/time/zone';
import { inDateOn } from '../../lib/qualifications';
import { readinessFromJson, readinessSql, type ReadinessJson } from '../isolations/isolation-readiness';
import { pointNeighbours } from '../isolations/isolation-neighbours';
import type { PermitRow } from './permits.repository';
import { perPersonIn } from '../crew/crew-queries';
import { certificateFactsSql, certificateReplacements, countedStepSql, ownStepNotHandedSql } from '../certificates/certificate-queries';
import { loadStopWorkFacts } from './stop-work-facts';

/** Gathers from the database everything the lifecycle guards need about one permit. */
export async function loadPermitFacts(sequelize: Sequelize, permit: PermitRow): Promise<PermitFacts> {
  const r = { tenantId: permit.tenantId, permitId: permit.id, inPlace: inPlaceStatuses, ...certificateReplacements };
  const [iso] = await sequelize.query<{
    steps: number; applied: number; verified: number; self_verified: number; remote_without_ack: number;
    still_applied: number; vents_open: number; plugs_in_place: number; plug_warnings: number; readiness: ReadinessJson | null; certificate: PermitCertificateFacts | null;
  }>(
    `SELECT count(*)::int AS steps,
            count(*) FILTER (WHERE status IN (:inPlace))::int AS applied,
            count(*) FILTER (WHERE status = 'verified' AND verified_by IS DISTINCT FROM applied_by
                             AND (NOT remotely_operable OR remote_ack_at IS NOT NULL))::int AS verified,
            count(*) FILTER (WHERE status = 'verified' AND verified_by = applied_by)::int AS self_verified,
            count(*) FILTER (WHERE status IN (:inPlace) AND remotely_operable AND remote_ack_at IS NULL)::int AS remote_without_ack,
            count(*) FILTER (WHERE status IN (:inPlace) AND ${ownStepNotHandedSql()})::int AS still_applied,
            count(*) FILTER (WHERE kind = 'vent' AND status IN (:inPlace) AND ${ownStepNotHandedSql()})::int AS vents_open,
            count(*) FILTER (WHERE kind = 'plug' AND status IN (:inPlace) AND ${ownStepNotHandedSql()})::int AS plugs_in_place,
            count(*) FILTER (WHERE jsonb_array_length(plug_warnings) > 0 AND plug_warnings_ack_at IS NULL AND status <> 'removed')::int AS plug_warnings,
            ${readinessSql} AS readiness, ${certificateFactsSql} AS certificate
     FROM isolation_steps WHERE tenant_id = :tenantId AND ${countedStepSql()}`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  // The group-lockout setting and the personal locks on the lockbox ride along: no statement of their own.
  const [gas] = await sequelize.query<{ last_pass: Date | null; last_fail: Date | null; settings: unknown; time_zone: string; crew_on: number; editors: string[] }>(
    `SELECT max(tested_at) FILTER (WHERE verdict = 'pass') AS last_pass, max(tested_at) FILTER (WHERE verdict = 'fail') AS last_fail,
            (SELECT settings FROM tenants WHERE id = :tenantId) AS settings, (SELECT time_zone FROM tenants WHERE id = :tenantId) AS time_zone,
            (SELECT count(*)::int FROM permit_crew_members WHERE tenant_id = :tenantId AND permit_id = :permitId AND signed_off_at IS NULL) AS crew_on,
            (SELECT coalesce(array_agg(user_id::text), '{}') FROM permit_editors WHERE tenant_id = :tenantId AND permit_id = :permitId) AS editors
     FROM gas_tests WHERE tenant_id = :tenantId AND permit_id = :permitId`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  // The same rule as plan save and apply, against every permit from accepted to work complete.
  const { conflicts } = await pointNeighbours(sequelize, permit.tenantId, permit.id);
  const fireWatchEndsAt =
    permit.kinds.includes('hot_work') && permit.hotWorkEndedAt ? new Date(new Date(permit.hotWorkEndedAt).getTime() + permit.fireWatchMinutes * 60_000) : null;
  return {
    state: permit.state,
    kinds: permit.kinds,
    requesterUserId: permit.requesterUserId,
    contractorOrganisationId: permit.contractorOrganisationId,
    contractorLeadUserId: permit.contractorLeadUserId,
    validFrom: new Date(permit.validFrom),
    validTo: new Date(permit.validTo),
    stateBeforeExpiry: permit.stateBeforeExpiry,
    checklist: permit.checklist,
    isolation: {
      steps: iso.steps,
      applied: iso.applied,
      verified: iso.verified,
      selfVerified: iso.self_verified,
      remoteValvesWithoutAck: iso.remote_without_ack,
      stillApplied: iso.still_applied,
      ventsOpen: iso.vents_open,
      plugsInPlace: iso.plugs_in_place,
      plugWarningsUnacknowledged: iso.plug_warnings,
      readiness: readinessFromJson(iso.readiness),
    },
    gas: { lastPassAt: gas.last_pass, lastFailAt: gas.last_fail, windowMinutes: permit.gasTestWindowMinutes },
    fireWatchEndsAt,
    walkdownComplete: permit.walkdown.filter((w) => w.required).every((w) => w.confirmed),
    controlRoomAcknowledged: Boolean(permit.controlRoomAckAt),
    conflicts: conflicts.map((c) => c.message),
    hasExpiredFlag: permit.expiredFlag,
    crewOnLockbox: perPersonIn(gas.settings) ? gas.crew_on : null,
    certificate: iso.certificate,
    stopWork: await loadStopWorkFacts(sequelize, permit.tenantId, permit.id),
    editorUserIds: gas.editors,
    holderUserId: permit.holderUserId,
    suspendedByKind: permit.suspendedByKind,
    timeZone: gas.time_zone,
  };
}

export async function loadActorFacts(sequelize: Sequelize, actor: Actor, on: Date): Promise<ActorFacts> {
  // "In date" is judged on the site day of `on`, so the tenant's zone comes with the rows.
  const quals = await sequelize.query<{ timeZone: string; kind: string | null; issuedOn: string | null; expiresOn: string | null }>(
    `SELECT t.time_zone AS "timeZone", q.kind, to_char(q.issued_on, 'YYYY-MM-DD') AS "issuedOn", to_char(q.expires_on, 'YYYY-MM-DD') AS "expiresOn"
     FROM tenants t LEFT JOIN qualifications q ON q.tenant_id = t.id AND q.user_id = :userId
     WHERE t.id = :tenantId`,
    { replacements: { tenantId: actor.tenantId, userId: actor.userId }, type: QueryTypes.SELECT },
  );
  const day = siteDay(on, quals[0]?.timeZone ?? 'UTC');
  return {
    userId: actor.userId,
    organisationIds: [...new Set(actor.memberships.map((m) => m.organisationId))],
    roles: actor.memberships.map((m) => m.role),
    qualifications: [...new Set(quals.filter((q) => q.kind && inDateOn(q, day)).map((q) => q.kind!))],
  };
}
