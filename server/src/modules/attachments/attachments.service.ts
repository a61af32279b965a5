import { createHash, randomUUID } from 'node:crypto';
import type { Readable } from 'node:stream';
import { QueryTypes, type Sequelize } from 'sequelize';
import { isInlineContentType, type AttachmentsQuery, type UploadAttachmentFields } from '@shared/schemas/attachment.schema';
import type { AttachmentSummary } from '@shared/types/attachments';
import type { Page } from '@shared/schemas/common.schema';
import { closedStates } from '@shared/permit/states';
import { stateLabel } from '@shared/permit/record-words';
import type { AppDeps } from '../../deps';
import { withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import { objectStorage } from '../../lib/storage';
import { appendAudit } from '../audit/audit.service';
import { auditActor, type CallerContext } from '../../lib/caller';
import { findPermit, type PermitRow } from '../permits/permits.repository';
import { sanitiseFileName, sniffContentType } from './file-checks';

export interface IncomingFile {
  originalname: string;
  buffer: Buffer;
  size: number;
}

/** Fields the CASL conditions on an attachment read: the permit's tenant and contractor. */
const attachmentSubject = (p: Pick<PermitRow, 'tenantId' | 'contractorOrganisationId'>) => ({ tenantId: p.tenantId, contractorOrganisationId: p.contractorOrganisationId });

async function loadPermitFor(deps: AppDeps, caller: CallerContext, permitId: string, action: 'read' | 'create', lock = false) {
  const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, caller.actor.tenantId, permitId, { lock }), 'permit');
  authorizeRecord(caller.ability, action, 'Attachment', attachmentSubject(permit), 'permit');
  return permit;
}

/** Role and tenant check before the body is read, so a refused caller never streams a file to us. */
export async function checkMayUpload(deps: AppDeps, caller: CallerContext, permitId: string) {
  await withTenant(deps.sequelize, caller.actor.tenantId, () => loadPermitFor(deps, caller, permitId, 'create'));
}

async function entityBelongs(sequelize: Sequelize, tenantId: string, permitId: string, fields: UploadAttachmentFields): Promise<string> {
  if (fields.entityType === 'permit') {
    if (fields.entityId && fields.entityId !== permitId) throw AppError.validation('The file can only be attached to this permit.', [{ path: 'entityId', message: 'Leave it empty or give this permit.' }]);
    return permitId;
  }
  const table = fields.entityType === 'isolation_step' ? 'isolation_steps' : 'gas_tests';
  const rows = await sequelize.query(`SELECT 1 FROM ${table} WHERE tenant_id = :tenantId AND permit_id = :permitId AND id = :id`, {
    replacements: { tenantId, permitId, id: fields.entityId },
    type: QueryTypes.SELECT,
  });
  if (!rows.length)
    throw AppError.validation(`That ${fields.entityType === 'isolation_step' ? 'isolation step' : 'gas test'} is not on this permit.`, [{ path: 'entityId', message: 'Choose one of this permit’s records.' }]);
  return fields.entityId!;
}

const summaryColumns = `
  a.id, a.permit_id AS "permitId", a.entity_type AS "entityType", a.entity_id AS "entityId", a.original_name AS "originalName",
  a.content_type AS "contentType", a.size_bytes AS "sizeBytes", a.sha256, a.uploaded_by AS "uploadedBy", u.name AS "uploadedByName", a.created_at AS "createdAt"`;

const withLinks = (row: Omit<AttachmentSummary<Date>, 'downloadUrl' | 'inline'>): AttachmentSummary<Date> => ({
  ...row,
  downloadUrl: `/api/attachments/${row.id}`,
  inline: isInlineContentType(row.contentType),
});

/** Where an attachment's bytes are stored: by tenant, permit and the attachment's own id. */
export const storageKey = (tenantId: string, permitId: string, attachmentId: string) => `${tenantId}/${permitId}/${attachmentId}`;
const uuid = '[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}';
// Files stored before keys named tenant and permit are a bare UUID in the upload folder.
const storedKeyPattern = new RegExp(`^(${uuid}/${uuid}/)?${uuid}$`);

/**
 * Checks the file, then in one transaction records the row and the audit event and, last, stores the
 * bytes (see lib/storage). Nothing is stored unless every check passed; if the transaction fails after
 * the write (at commit, say), the stored file is removed again.
 */
export async function addAttachment(deps: AppDeps, caller: CallerContext, permitId: string, file: IncomingFile | undefined, fields: UploadAttachmentFields): Promise<AttachmentSummary<Date>> {
  if (!file) throw AppError.validation('Choose a file to upload.', [{ path: 'file', message: 'Send the file in the form field "file".' }]);
  if (file.size === 0 || file.buffer.length === 0) throw AppError.validation('The file is empty (0 bytes).', [{ path: 'file', message: 'Choose a file that has content.' }]);
  const originalName = sanitiseFileName(file.originalname);
  const sniffed = await sniffContentType(file.buffer, originalName);
  if (!sniffed.ok) throw new AppError('unsupported_media_type', sniffed.message, [{ path: 'file', message: sniffed.message }]);
  const sha256 = createHash('sha256').update(file.buffer).digest('hex');
  const id = randomUUID();
  const storedName = storageKey(caller.actor.tenantId, permitId, id);
  const storage = objectStorage(deps.config);
  let written = false;
  try {
    return await withTenant(deps.sequelize, caller.actor.tenantId, async () => {
      const { tenantId } = caller.actor;
      const permit = await loadPermitFor(deps, caller, permitId, 'create', true);
      if (closedStates.includes(permit.state)) throw AppError.unprocessable(`Permit ${permit.number} is ${stateLabel(permit.state).toLowerCase()}; its record takes no new files.`);
      const entityId = await entityBelongs(deps.sequelize, tenantId, permitId, fields);
      const now = deps.clock.now();
      const [row] = await deps.sequelize.query<{ id: string }>(
        `INSERT INTO attachments (id, tenant_id, permit_id, entity_type, entity_id, original_name, stored_name, content_type, size_bytes, sha256, uploaded_by, created_at)
         VALUES (:id, :tenantId, :permitId, :entityType, :entityId, :originalName, :storedName, :contentType, :size, :sha256, :userId, :now) RETURNING id`,
        {
          replacements: { id, tenantId, permitId, entityType: fields.entityType, entityId, originalName, storedName, contentType: sniffed.contentType, size: file.buffer.length, sha256, userId: caller.user.id, now },
          type: QueryTypes.SELECT,
        },
      );
      await appendAudit(deps.sequelize, {
        tenantId, entityType: 'attachment', entityId: row.id, permitId, action: 'attachment_added', actor: auditActor(caller, 'create'), ip: caller.ip,
        data: { name: originalName, contentType: sniffed.contentType, sizeBytes: file.buffer.length, sha256, attachedTo: { entityType: fields.entityType, entityId } },
        occurredAt: now,
      });
      try {
        await storage.put(storedName, file.buffer, sniffed.contentType);
      } catch (err) {
        deps.logger.error({ err: (err as Error).message, file: storedName }, 'could not store an upload');
        throw new AppError('service_unavailable', 'The file store is not reachable right now. Try the upload again in a minute.');
      }
      written = true;
      const [summary] = await deps.sequelize.query<Omit<AttachmentSummary<Date>, 'downloadUrl' | 'inline'>>(
        `SELECT ${summaryColumns} FROM attachments a JOIN users u ON u.id = a.uploaded_by WHERE a.tenant_id = :tenantId AND a.id = :id`,
        { replacements: { tenantId, id: row.id }, type: QueryTypes.SELECT },
      );
      return withLinks(summary);
    });
  } catch (err) {
    if (written) await storage.remove(storedName).catch((e: Error) => deps.logger.error({ err: e.message, file: storedName }, 'could not remove an orphaned upload'));
    throw err;
  }
}

export async function listAttachments(deps: AppDeps, caller: CallerContext, permitId: string, q: AttachmentsQuery): Promise<Page<AttachmentSummary<Date>>> {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    await loadPermitFor(deps, caller, permitId, 'read');
    const where = ['a.tenant_id = :tenantId', 'a.permit_id = :permitId'];
    const r: Record<string, unknown> = { tenantId, permitId, limit: q.pageSize, offset: (q.page - 1) * q.pageSize };
    if (q.entityType) {
      where.push('a.entity_type = :entityType');
      r.entityType = q.entityType;
    }
    if (q.entityId) {
      where.push('a.entity_id = :entityId');
      r.entityId = q.entityId;
    }
    const whereSql = where.join(' AND ');
    const [{ n }] = await deps.sequelize.query<{ n: number }>(`SELECT count(*)::int AS n FROM attachments a WHERE ${whereSql}`, { replacements: r, type: QueryTypes.SELECT });
    const rows = await deps.sequelize.query<Omit<AttachmentSummary<Date>, 'downloadUrl' | 'inline'>>(
      `SELECT ${summaryColumns} FROM attachments a JOIN users u ON u.id = a.uploaded_by WHERE ${whereSql} ORDER BY a.created_at DESC, a.id LIMIT :limit OFFSET :offset`,
      { replacements: r, type: QueryTypes.SELECT },
    );
    return { items: rows.map(withLinks), total: n, page: q.page, pageSize: q.pageSize };
  });
}

export interface OpenedAttachment {
  summary: AttachmentSummary<Date>;
  body: Readable;
}

/** Finds the attachment the caller may read (another tenant's, or one they may not see: 404) and opens its stored bytes. */
export async function openAttachment(deps: AppDeps, caller: CallerContext, id: string): Promise<OpenedAttachment> {
  const { tenantId } = caller.actor;
  const found = await withTenant(deps.sequelize, tenantId, async () => {
    const [row] = await deps.sequelize.query<Omit<AttachmentSummary<Date>, 'downloadUrl' | 'inline'> & { storedName: string; contractorOrganisationId: string | null }>(
      `SELECT ${summaryColumns}, a.stored_name AS "storedName", p.contractor_organisation_id AS "contractorOrganisationId"
       FROM attachments a JOIN users u ON u.id = a.uploaded_by
       LEFT JOIN permits p ON p.tenant_id = a.tenant_id AND p.id = a.permit_id
       WHERE a.tenant_id = :tenantId AND a.id = :id`,
      { replacements: { tenantId, id }, type: QueryTypes.SELECT },
    );
    if (!row) throw AppError.notFound('attachment');
    authorizeRecord(caller.ability, 'read', 'Attachment', { tenantId, contractorOrganisationId: row.contractorOrganisationId }, 'attachment');
    return row;
  });
  const { storedName, contractorOrganisationId: _c, ...summary } = found;
  // The stored name is ours (ids), never the person's file name; still refuse anything else.
  if (!storedKeyPattern.test(storedName)) throw AppError.notFound('attachment');
  let body: Readable | null;
  try {
    body = await objectStorage(deps.config).get(storedName);
  } catch (err) {
    deps.logger.error({ err: (err as Error).message, attachmentId: id }, 'file store not reachable');
    throw new AppError('service_unavailable', 'The file store is not reachable right now. Try again in a minute.');
  }
  if (!body) {
    deps.logger.error({ attachmentId: id }, 'attachment file missing');
    throw new AppError('not_found', 'The file of that attachment is missing from storage. Tell your administrator.');
  }
  return { summary: withLinks(summary), body };
}
