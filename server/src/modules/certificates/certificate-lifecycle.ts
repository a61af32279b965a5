import { QueryTypes, type Sequelize } from 'sequelize';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import { lineIsolatingStepKinds } from '@shared/isolations/readiness';
import type { PermitEvent } from '@shared/permit/state-machine';
import { certificateReleaseStates, type PermitState } from '@shared/permit/states';
import { isCertificateLive, liveCertificateState, returnedCertificateState, type CertificateState } from '@shared/isolations/certificate-states';
import { AppError } from '../../errors/app-error';
import { appendAudit } from '../audit/audit.service';
import type { PermitRow } from '../permits/permits.repository';

/*
 * What the permit lifecycle and the isolation steps do to isolation certificates (HSE HSG253, HSG250),
 * in the caller's transaction:
 * - the authoriser's "isolations in place" signature on a permit that made its own isolations issues a
 *   certificate for them; on a permit relying on another's certificate it issues none;
 * - a permit returned to service, closed or cancelled no longer relies on its certificate; a
 *   certificate that is not long-term is returned once nothing relies on it and its isolations are off;
 * - an isolation a certificate still needs for another permit stays on.
 */

interface Signer {
  userId: string;
  name: string;
}

export async function nextCertificateNumber(sequelize: Sequelize, tenantId: string, year: number): Promise<string> {
  const [row] = await sequelize.query<{ last: number }>(
    `INSERT INTO certificate_sequences (tenant_id, year, last) VALUES (:tenantId, :year, 1)
     ON CONFLICT (tenant_id, year) DO UPDATE SET last = certificate_sequences.last + 1 RETURNING last`,
    { replacements: { tenantId, year }, type: QueryTypes.SELECT },
  );
  return `IC-${year}-${String(row.last).padStart(4, '0')}`;
}

/** The certificate the permit relies on now, locked, or null. */
export async function reliedCertificate(sequelize: Sequelize, tenantId: string, permitId: string) {
  const [row] = await sequelize.query<{ id: string; number: string; longTerm: boolean }>(
    `SELECT c.id, c.number, c.long_term AS "longTerm" FROM certificate_permits cp
     JOIN isolation_certificates c ON c.tenant_id = cp.tenant_id AND c.id = cp.certificate_id
     WHERE cp.tenant_id = :tenantId AND cp.permit_id = :permitId AND cp.released_at IS NULL FOR UPDATE OF c`,
    { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
  );
  return row ?? null;
}

/**
 * Issues a certificate for the isolations the permit made, unless it relies on one already. The
 * section runs between the innermost line-isolating devices on each side of the work (the work's own
 * end where a side is a declared dead end).
 */
async function issueCertificate(sequelize: Sequelize, permit: PermitRow, signer: Signer, now: Date) {
  const { tenantId } = permit;
  if (await reliedCertificate(sequelize, tenantId, permit.id)) return null;
  const [span] = await sequelize.query<{ upstream: number | null; downstream: number | null }>(
    `SELECT max(pos) FILTER (WHERE pos <= :from) AS upstream, min(pos) FILTER (WHERE pos >= :to) AS downstream
     FROM (SELECT coalesce(ip.position, s.temp_position)::float8 AS pos FROM isolation_steps s
           LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
           WHERE s.tenant_id = :tenantId AND s.permit_id = :permitId AND s.kind IN (:kinds) AND s.status IN (:inPlace)) d`,
    { replacements: { tenantId, permitId: permit.id, from: permit.fromPosition, to: permit.toPosition, kinds: lineIsolatingStepKinds, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
  );
  const number = await nextCertificateNumber(sequelize, tenantId, now.getUTCFullYear());
  const [cert] = await sequelize.query<{ id: string }>(
    `INSERT INTO isolation_certificates (tenant_id, number, pipeline_id, from_position, to_position, issued_for_permit_id, proving_id, issued_by, issued_signed_name, issued_at)
     VALUES (:tenantId, :number, :pipelineId, :from, :to, :permitId,
       (SELECT id FROM isolation_provings WHERE tenant_id = :tenantId AND permit_id = :permitId AND result = 'proved' ORDER BY ended_at DESC LIMIT 1),
       :userId, :name, :now) RETURNING id`,
    {
      replacements: {
        tenantId, number, pipelineId: permit.pipelineId, permitId: permit.id, userId: signer.userId, name: signer.name, now,
        from: span?.upstream ?? permit.fromPosition, to: span?.downstream ?? permit.toPosition,
      },
      type: QueryTypes.SELECT,
    },
  );
  await sequelize.query(`UPDATE isolation_steps SET certificate_id = :certId, updated_at = :now WHERE tenant_id = :tenantId AND permit_id = :permitId AND status IN (:inPlace)`, {
    replacements: { tenantId, certId: cert.id, permitId: permit.id, now, inPlace: inPlaceStatuses },
  });
  await sequelize.query(`INSERT INTO certificate_permits (tenant_id, certificate_id, permit_id, linked_by, linked_at) VALUES (:tenantId, :certId, :permitId, :userId, :now)`, {
    replacements: { tenantId, certId: cert.id, permitId: permit.id, userId: signer.userId, now },
  });
  await appendAudit(sequelize, {
    tenantId, entityType: 'isolation_certificate', entityId: cert.id, permitId: permit.id, action: 'certificate_issued', toState: liveCertificateState,
    actor: { userId: signer.userId, name: signer.name, role: 'authoriser' }, data: { number, permit: permit.number }, occurredAt: now,
  });
  return { id: cert.id, number };
}

/** Returns a certificate that is not long-term once no permit relies on it and none of its isolations is on. */
export async function returnIfDone(sequelize: Sequelize, tenantId: string, certificateId: string, now: Date, by: Signer | null, permitId: string | null) {
  const [row] = await sequelize.query<{ number: string; relying: number; inPlace: number }>(
    `SELECT c.number,
            (SELECT count(*)::int FROM certificate_permits cp WHERE cp.tenant_id = c.tenant_id AND cp.certificate_id = c.id AND cp.released_at IS NULL) AS relying,
            (SELECT count(*)::int FROM isolation_steps s WHERE s.tenant_id = c.tenant_id AND s.certificate_id = c.id AND s.status IN (:inPlace)) AS "inPlace"
     FROM isolation_certificates c WHERE c.tenant_id = :tenantId AND c.id = :id AND c.state = :live AND NOT c.long_term FOR UPDATE`,
    { replacements: { tenantId, id: certificateId, inPlace: inPlaceStatuses, live: liveCertificateState }, type: QueryTypes.SELECT },
  );
  if (!row || row.relying || row.inPlace) return false;
  await sequelize.query(`UPDATE isolation_certificates SET state = :returned, returned_at = :now, returned_by = :userId, updated_at = :now WHERE tenant_id = :tenantId AND id = :id`, {
    replacements: { tenantId, id: certificateId, now, userId: by?.userId ?? null, returned: returnedCertificateState },
  });
  await appendAudit(sequelize, {
    tenantId, entityType: 'isolation_certificate', entityId: certificateId, permitId, action: 'certificate_returned', fromState: liveCertificateState, toState: returnedCertificateState,
    actor: by ? { ...by, role: null } : null, reason: 'No permit relies on it and its isolations are off.', data: { number: row.number, by: by ? 'person' : 'holdpoint' }, occurredAt: now,
  });
  return true;
}

/** Called by the permit lifecycle, in its transaction, after the permit's state changed. */
export async function certificateAfterTransition(sequelize: Sequelize, permit: PermitRow, event: PermitEvent, to: PermitState, signer: Signer | null, now: Date) {
  if (event === 'confirm_isolated' && signer) {
    await issueCertificate(sequelize, permit, signer, now);
    return;
  }
  if (!certificateReleaseStates.includes(to)) return;
  const relied = await reliedCertificate(sequelize, permit.tenantId, permit.id);
  if (!relied) return;
  await sequelize.query(`UPDATE certificate_permits SET released_at = :now WHERE tenant_id = :tenantId AND permit_id = :permitId AND released_at IS NULL`, {
    replacements: { tenantId: permit.tenantId, permitId: permit.id, now },
  });
  await appendAudit(sequelize, {
    tenantId: permit.tenantId, entityType: 'isolation_certificate', entityId: relied.id, permitId: permit.id, action: 'certificate_released',
    actor: signer ? { ...signer, role: null } : null, data: { number: relied.number, permit: permit.number, permitState: to }, occurredAt: now,
  });
  await returnIfDone(sequelize, permit.tenantId, relied.id, now, signer, permit.id);
}

/**
 * A step a live certificate still needs for another permit stays on (HSE HSG253: the certificate is
 * returned only when no permit relies on it), naming the permit. Answers whether the step belongs to
 * a live long-term certificate nobody relies on: such a step comes off to return the certificate,
 * whatever the state of the permit that made it.
 */
export async function certificateRemovalCheck(sequelize: Sequelize, tenantId: string, step: { id: string; permitId: string }) {
  const [cert] = await sequelize.query<{ id: string; number: string; longTerm: boolean; state: CertificateState }>(
    `SELECT c.id, c.number, c.long_term AS "longTerm", c.state FROM isolation_steps s
     JOIN isolation_certificates c ON c.tenant_id = s.tenant_id AND c.id = s.certificate_id
     WHERE s.tenant_id = :tenantId AND s.id = :stepId FOR UPDATE OF c`,
    { replacements: { tenantId, stepId: step.id }, type: QueryTypes.SELECT },
  );
  if (!cert || !isCertificateLive(cert)) return { certificateId: cert?.id ?? null, returningLongTerm: false };
  const others = await sequelize.query<{ number: string }>(
    `SELECT p.number FROM certificate_permits cp JOIN permits p ON p.tenant_id = cp.tenant_id AND p.id = cp.permit_id
     WHERE cp.tenant_id = :tenantId AND cp.certificate_id = :certId AND cp.released_at IS NULL AND cp.permit_id <> :permitId ORDER BY p.number`,
    { replacements: { tenantId, certId: cert.id, permitId: step.permitId }, type: QueryTypes.SELECT },
  );
  if (others.length)
    throw AppError.unprocessable(
      `${others.map((o) => o.number).join(', ')} still ${others.length === 1 ? 'works' : 'work'} under ${cert.number}: this isolation stays on until no permit relies on the certificate.`,
    );
  return { certificateId: cert.id, returningLongTerm: cert.longTerm };
}
