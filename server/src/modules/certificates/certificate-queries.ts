import { liveCertificateState } from '@shared/isolations/certificate-states';

/**
 * SQL pieces about isolation certificates that other features fold into statements they already
 * send (replacements :tenantId and :permitId, and `certificateReplacements` where a piece says so), so
 * the permit's guards and readiness see the certificate without a statement of their own.
 */

/** The values the pieces below take as parameters. */
export const certificateReplacements = { liveCertificate: liveCertificateState };

/** The certificate the permit relies on now, or null. */
export const reliedCertificateSql = `(SELECT cp.certificate_id FROM certificate_permits cp
   WHERE cp.tenant_id = :tenantId AND cp.permit_id = :permitId AND cp.released_at IS NULL)`;

/** A step the permit counts: its own, or one of the certificate it relies on. */
export const countedStepSql = (alias = '') => `(${alias}permit_id = :permitId OR ${alias}certificate_id = ${reliedCertificateSql})`;

/**
 * A step of the permit still to come off before its return to service: its own step in place, unless
 * the step belongs to a live long-term certificate, which then holds it beyond the permit (takes
 * `certificateReplacements`).
 */
export const ownStepNotHandedSql = (alias = '') => `(${alias}permit_id = :permitId AND (${alias}certificate_id IS NULL OR NOT EXISTS (
   SELECT 1 FROM isolation_certificates c WHERE c.tenant_id = ${alias}tenant_id AND c.id = ${alias}certificate_id AND c.long_term AND c.state = :liveCertificate)))`;

/** The certificate the permit relies on, as the guards read it: JSON { number, state, problem } or null. */
export const certificateFactsSql = `(SELECT json_build_object('number', c.number, 'state', c.state, 'problem', c.problem)
   FROM isolation_certificates c WHERE c.tenant_id = :tenantId AND c.id = ${reliedCertificateSql})`;

/** The proving that proved the relied certificate's section when it was issued. */
export const certificateProvingIdSql = `(SELECT c.proving_id FROM isolation_certificates c WHERE c.tenant_id = :tenantId AND c.id = ${reliedCertificateSql})`;
