import { QueryTypes } from 'sequelize';
import { formatInZone } from '@shared/time/zone';
import { liveCertificateState } from '@shared/isolations/certificate-states';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { notifyChange } from '../isolations/isolation-queries';
import { appendAudit } from '../audit/audit.service';
import { loadTenantSettings } from '../tenants/tenant-settings';
import { queueCertificateAlert } from './certificate-alerts';

/**
 * Long-term isolations whose re-check is past due (HSE HSG253: inspected at intervals), alerted like
 * overdue gas tests: each certificate is claimed with FOR UPDATE SKIP LOCKED, so several server
 * processes never alert twice, and `recheck_alerted_due` remembers which due time was alerted: one
 * alert per overdue period, a new one only after a passing re-check has set the next due time.
 */
export async function markOverdueRechecks(deps: AppDeps): Promise<number> {
  const tenants = await deps.sequelize.query<{ id: string }>(`SELECT id FROM hp_tenant_ids() AS id`, { type: QueryTypes.SELECT });
  let alerted = 0;
  for (const { id: tenantId } of tenants) {
    try {
      alerted += await withTenant(deps.sequelize, tenantId, async () => {
        const now = deps.clock.now();
        const due = await deps.sequelize.query<{ id: string; number: string; pipelineName: string; dueAt: Date }>(
          `SELECT c.id, c.number, pl.name AS "pipelineName", c.next_recheck_due AS "dueAt"
           FROM isolation_certificates c JOIN pipelines pl ON pl.tenant_id = c.tenant_id AND pl.id = c.pipeline_id
           WHERE c.tenant_id = :tenantId AND c.state = :live AND c.long_term AND c.next_recheck_due <= :now
             AND c.recheck_alerted_due IS DISTINCT FROM c.next_recheck_due
           ORDER BY c.next_recheck_due FOR UPDATE OF c SKIP LOCKED`,
          { replacements: { tenantId, now, live: liveCertificateState }, type: QueryTypes.SELECT },
        );
        if (!due.length) return 0;
        const { timeZone } = await loadTenantSettings(deps.sequelize, tenantId);
        for (const cert of due) {
          await deps.sequelize.query(`UPDATE isolation_certificates SET recheck_alerted_due = next_recheck_due WHERE tenant_id = :tenantId AND id = :id`, {
            replacements: { tenantId, id: cert.id },
          });
          const when = formatInZone(cert.dueAt, timeZone);
          await appendAudit(deps.sequelize, {
            tenantId, entityType: 'isolation_certificate', entityId: cert.id, action: 'certificate_recheck_overdue', actor: null,
            reason: `The re-check of long-term isolation ${cert.number} was due at ${when}.`, data: { number: cert.number, dueAt: cert.dueAt.toISOString(), by: 'holdpoint' }, occurredAt: now,
          });
          await queueCertificateAlert(deps.sequelize, { tenantId, ...cert }, {
            key: `recheck-overdue:${cert.id}:${cert.dueAt.toISOString()}`,
            subject: 'long-term isolation re-check overdue',
            lines: [
              `The re-check of the long-term isolation ${cert.number} on ${cert.pipelineName} was due at ${when} and has not been recorded.`,
              'Send a lockout-qualified person to check that every lock and tag is intact, every valve still closed and no pressure is building up, and record it.',
            ],
            publicUrl: deps.config.PUBLIC_URL,
          });
          await notifyChange(deps.sequelize, { tenantId, kind: 'certificate', certificateId: cert.id, action: 'certificate_recheck_overdue' });
        }
        return due.length;
      });
    } catch (err) {
      deps.logger.warn({ err: (err as Error).message, tenantId }, 'scheduler could not check long-term isolations');
    }
  }
  return alerted;
}
