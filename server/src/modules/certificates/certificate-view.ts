import { QueryTypes, type Sequelize } from 'sequelize';
import { isIsolatingKind, isolatingStepKinds } from '@shared/isolations/readiness';
import { inPlaceStatuses } from '@shared/isolations/step-rules';
import { liveCertificateState } from '@shared/isolations/certificate-states';
import type { Page } from '@shared/schemas/common.schema';
import type { CertificatesQuery } from '@shared/schemas/certificates.schema';
import type { CertificatePermitLink, CertificateProving, CertificateStep, IsolationCertificate, IsolationCertificateSummary, IsolationRecheck } from '@shared/types/certificates';

/** A certificate as the server reads it. */
export type CertificateRow = IsolationCertificateSummary<Date> & { tenantId: string };

const summaryColumns = `
  c.id, c.tenant_id AS "tenantId", c.number, c.state, c.pipeline_id AS "pipelineId", pl.code AS "pipelineCode", pl.name AS "pipelineName",
  c.from_position::float8 AS "fromPosition", c.to_position::float8 AS "toPosition", c.issued_at AS "issuedAt", iu.name AS "issuedByName",
  c.long_term AS "longTerm", c.long_term_reason AS "longTermReason", c.recheck_hours AS "recheckHours", c.next_recheck_due AS "nextRecheckDue",
  (c.state = :live AND c.long_term AND c.next_recheck_due <= :now) AS "recheckOverdue", c.problem, c.problem_at AS "problemAt", c.returned_at AS "returnedAt",
  (SELECT count(*)::int FROM isolation_steps s WHERE s.tenant_id = c.tenant_id AND s.certificate_id = c.id AND s.status IN (:inPlace) AND s.kind IN (:isolating)) AS "devicesInPlace",
  (SELECT count(*)::int FROM certificate_permits cp WHERE cp.tenant_id = c.tenant_id AND cp.certificate_id = c.id AND cp.released_at IS NULL) AS "permitsRelying"`;

const summaryJoins = `
  JOIN pipelines pl ON pl.tenant_id = c.tenant_id AND pl.id = c.pipeline_id
  JOIN users iu ON iu.id = c.issued_by`;

const fixed = (now: Date) => ({ now, inPlace: inPlaceStatuses, isolating: isolatingStepKinds, live: liveCertificateState });

export async function listCertificates(sequelize: Sequelize, tenantId: string, q: CertificatesQuery, now: Date): Promise<Page<IsolationCertificateSummary<Date>>> {
  const where = ['c.tenant_id = :tenantId'];
  const r: Record<string, unknown> = { tenantId, ...fixed(now), limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
  if (q.state) {
    where.push('c.state = :state');
    r.state = q.state;
  }
  if (q.pipelineId) {
    where.push('c.pipeline_id = :pipelineId');
    r.pipelineId = q.pipelineId;
  }
  if (q.longTerm) where.push(q.longTerm === 'true' ? 'c.long_term' : 'NOT c.long_term');
  if (q.permitId) {
    where.push('EXISTS (SELECT 1 FROM certificate_permits cp WHERE cp.tenant_id = c.tenant_id AND cp.certificate_id = c.id AND cp.permit_id = :permitId)');
    r.permitId = q.permitId;
  }
  const [{ total }] = await sequelize.query<{ total: number }>(`SELECT count(*)::int AS total FROM isolation_certificates c WHERE ${where.join(' AND ')}`, {
    replacements: r,
    type: QueryTypes.SELECT,
  });
  // Live first, then the re-check falling due soonest, then the newest.
  const rows = await sequelize.query<CertificateRow>(
    `SELECT ${summaryColumns} FROM isolation_certificates c ${summaryJoins} WHERE ${where.join(' AND ')}
     ORDER BY (c.state = :live) DESC, c.next_recheck_due ASC NULLS LAST, c.issued_at DESC, c.number DESC LIMIT :limit OFFSET :offset`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  return { items: rows.map(({ tenantId: _t, ...rest }) => rest), total, page: q.page, pageSize: q.pageSize };
}

export async function findCertificate(sequelize: Sequelize, tenantId: string, id: string, now: Date, opts: { lock?: boolean } = {}): Promise<CertificateRow | null> {
  if (opts.lock) await sequelize.query(`SELECT 1 FROM isolation_certificates WHERE tenant_id = :tenantId AND id = :id FOR UPDATE`, { replacements: { tenantId, id } });
  const [row] = await sequelize.query<CertificateRow>(`SELECT ${summaryColumns} FROM isolation_certificates c ${summaryJoins} WHERE c.tenant_id = :tenantId AND c.id = :id`, {
    replacements: { tenantId, id, ...fixed(now) },
    type: QueryTypes.SELECT,
  });
  return row ?? null;
}

/** Everything the certificate's page shows, less the actions (the service adds those). */
export async function certificateDetail(sequelize: Sequelize, row: CertificateRow, now: Date): Promise<Omit<IsolationCertificate<Date>, 'actions' | 'recheckLimit'>> {
  const r = { tenantId: row.tenantId, id: row.id, now };
  const [extra] = await sequelize.query<{ issuedForPermitId: string; issuedSignedName: string; longTermAt: Date | null; longTermByName: string | null; returnedByName: string | null }>(
    `SELECT c.issued_for_permit_id AS "issuedForPermitId", c.issued_signed_name AS "issuedSignedName", c.long_term_at AS "longTermAt",
            lt.name AS "longTermByName", rb.name AS "returnedByName"
     FROM isolation_certificates c LEFT JOIN users lt ON lt.id = c.long_term_by LEFT JOIN users rb ON rb.id = c.returned_by
     WHERE c.tenant_id = :tenantId AND c.id = :id`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  const steps = await sequelize.query<Omit<CertificateStep<Date>, 'isolatingDevice'>>(
    `SELECT s.id, s.permit_id AS "permitId", coalesce(ip.tag_code, s.temp_label) AS label, s.kind, coalesce(ip.position, s.temp_position)::float8 AS position, s.status,
            l.number AS "lockNumber", t.number AS "tagNumber", ap.name AS "appliedByName", s.applied_at AS "appliedAt", vb.name AS "verifiedByName", s.removed_at AS "removedAt"
     FROM isolation_steps s
     LEFT JOIN isolation_points ip ON ip.tenant_id = s.tenant_id AND ip.id = s.point_id
     LEFT JOIN locks l ON l.tenant_id = s.tenant_id AND l.id = s.lock_id
     LEFT JOIN tags t ON t.tenant_id = s.tenant_id AND t.id = s.tag_id
     LEFT JOIN users ap ON ap.id = s.applied_by
     LEFT JOIN users vb ON vb.id = s.verified_by
     WHERE s.tenant_id = :tenantId AND s.certificate_id = :id ORDER BY position, s.seq`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  const permits = await sequelize.query<CertificatePermitLink<Date>>(
    `SELECT p.id AS "permitId", p.number, p.title, p.state, p.from_position::float8 AS "fromPosition", p.to_position::float8 AS "toPosition",
            cp.linked_at AS "linkedAt", cp.released_at AS "releasedAt", (p.id = c.issued_for_permit_id) AS "issuedFor"
     FROM certificate_permits cp JOIN permits p ON p.tenant_id = cp.tenant_id AND p.id = cp.permit_id
     JOIN isolation_certificates c ON c.tenant_id = cp.tenant_id AND c.id = cp.certificate_id
     WHERE cp.tenant_id = :tenantId AND cp.certificate_id = :id ORDER BY cp.linked_at, p.number`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  const [proving] = await sequelize.query<CertificateProving<Date>>(
    `SELECT coalesce(bp.tag_code, b.temp_label) AS at, pr.unit, pr.start_reading::float8 AS "startReading", pr.end_reading::float8 AS "endReading",
            pr.hold_minutes AS "holdMinutes", pr.ended_at AS "endedAt", eb.name AS "endedByName", pr.result
     FROM isolation_certificates c
     JOIN isolation_provings pr ON pr.tenant_id = c.tenant_id AND pr.id = c.proving_id
     JOIN isolation_steps b ON b.tenant_id = pr.tenant_id AND b.id = pr.step_id
     LEFT JOIN isolation_points bp ON bp.tenant_id = b.tenant_id AND bp.id = b.point_id
     LEFT JOIN users eb ON eb.id = pr.ended_by
     WHERE c.tenant_id = :tenantId AND c.id = :id`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  const rechecks = await sequelize.query<IsolationRecheck<Date>>(
    `SELECT rc.id, rc.checked_at AS "checkedAt", u.name AS "checkedByName", rc.locks_and_tags_intact AS "locksAndTagsIntact", rc.valves_still_closed AS "valvesStillClosed",
            rc.gauge_reading::float8 AS "gaugeReading", rc.gauge_unit AS "gaugeUnit", rc.max_pressure::float8 AS "maxPressure", rc.max_pressure_unit AS "maxPressureUnit",
            rc.result, rc.failure, rc.notes
     FROM isolation_rechecks rc JOIN users u ON u.id = rc.checked_by
     WHERE rc.tenant_id = :tenantId AND rc.certificate_id = :id ORDER BY rc.checked_at DESC, rc.created_at DESC`,
    { replacements: r, type: QueryTypes.SELECT },
  );
  const { tenantId: _t, ...summary } = row;
  return { ...summary, ...extra, steps: steps.map((s) => ({ ...s, isolatingDevice: isIsolatingKind(s.kind) })), permits, proving: proving ?? null, rechecks };
}

/** Permit numbers relying on the certificate now, besides the one named. */
export async function relyingPermitNumbers(sequelize: Sequelize, tenantId: string, certificateId: string): Promise<string[]> {
  const rows = await sequelize.query<{ number: string }>(
    `SELECT p.number FROM certificate_permits cp JOIN permits p ON p.tenant_id = cp.tenant_id AND p.id = cp.permit_id
     WHERE cp.tenant_id = :tenantId AND cp.certificate_id = :id AND cp.released_at IS NULL ORDER BY p.number`,
    { replacements: { tenantId, id: certificateId }, type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.number);
}

/** Steps of the certificate still on. */
export async function stepsInPlace(sequelize: Sequelize, tenantId: string, certificateId: string): Promise<number> {
  const [row] = await sequelize.query<{ n: number }>(
    `SELECT count(*)::int AS n FROM isolation_steps WHERE tenant_id = :tenantId AND certificate_id = :id AND status IN (:inPlace)`,
    { replacements: { tenantId, id: certificateId, inPlace: inPlaceStatuses }, type: QueryTypes.SELECT },
  );
  return row.n;
}
