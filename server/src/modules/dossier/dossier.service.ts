import { createHash } from 'node:crypto';
import QRCode from 'qrcode';
import { QueryTypes } from 'sequelize';
import type { DossierJob } from '@shared/types/dossier';
import { editableStates } from '@shared/permit/states';
import type { AppDeps } from '../../deps';
import { whenCommitted, withTenant } from '../../db/sequelize';
import { AppError } from '../../errors/app-error';
import { authorizeRecord } from '../../lib/authorize';
import type { CallerContext } from '../../lib/caller';
import { findPermit } from '../permits/permits.repository';
import { permitDetail } from '../permits/permit-view';
import { loadPrintRecord } from '../permits/permit-print-record';
import { openAttachment } from '../attachments/attachments.service';
import { checkpointPrintBlock } from '../audit/checkpoint-print';
import { embeddable, loadAttachmentList, loadCertificates, renderDossier } from './dossier-pdf';

/** More photos than this and the dossier is built in the background; fewer, and the request waits for it (the same code either way). */
export const BACKGROUND_PHOTOS = 4;
/** A build that has not moved for this long died with its process. */
const STALLED_MS = 10 * 60_000;
/** Finished dossiers are kept this long, then dropped at the next request for the permit. */
const KEEP_MS = 24 * 60 * 60_000;

interface JobRow {
  id: string; permit_id: string; state: DossierJob['state']; progress: number; stage: string;
  started_at: Date; updated_at: Date; finished_at: Date | null; size_bytes: number | null; error: string | null;
}
const JOB_COLUMNS = 'id, permit_id, state, progress, stage, started_at, updated_at, finished_at, size_bytes, error';

function toJob(deps: AppDeps, r: JobRow): DossierJob<Date> {
  const stalled = r.state === 'running' && deps.clock.now().getTime() - new Date(r.updated_at).getTime() > STALLED_MS;
  return {
    id: r.id,
    permitId: r.permit_id,
    state: stalled ? 'failed' : r.state,
    progress: r.progress,
    stage: stalled ? 'Stopped' : r.stage,
    startedAt: r.started_at,
    finishedAt: r.finished_at,
    sizeBytes: r.size_bytes,
    downloadUrl: r.state === 'done' ? `/api/permits/${r.permit_id}/dossier/${r.id}/pdf` : null,
    error: stalled ? 'The build stopped before it finished. Start the dossier again.' : r.error,
  };
}

/** Builds still running in this process, so a test or a shutdown can wait for them. */
const inFlight = new Set<Promise<void>>();
export const settleDossierBuilds = () => Promise.all([...inFlight]);

async function setProgress(deps: AppDeps, tenantId: string, jobId: string, progress: number, stage: string) {
  await withTenant(deps.sequelize, tenantId, () =>
    deps.sequelize.query(`UPDATE dossier_jobs SET progress = greatest(progress, :progress), stage = :stage, updated_at = :now WHERE tenant_id = :tenantId AND id = :jobId AND state = 'running'`, {
      replacements: { tenantId, jobId, progress: Math.round(progress), stage, now: deps.clock.now() },
    }),
  );
}

/**
 * Reads everything as the caller (their rights decide what is read), signs a checkpoint of the chain
 * head, reads each photo through the attachments service, lays out the PDF and stores it in the job
 * row. Progress is written to the row after each part. Never throws: a failure is kept on the job.
 */
async function build(deps: AppDeps, caller: CallerContext, jobId: string, permitId: string) {
  const { tenantId } = caller.actor;
  try {
    const permit = await permitDetail(deps, caller, permitId);
    const { record, certificates, attachments } = await withTenant(deps.sequelize, tenantId, async () => ({
      record: await loadPrintRecord(deps, tenantId, permitId),
      certificates: await loadCertificates(deps, tenantId, permitId),
      attachments: await loadAttachmentList(deps, tenantId, permitId),
    }));
    await setProgress(deps, tenantId, jobId, 10, 'Signing a checkpoint of the audit trail');
    const checkpoint = await checkpointPrintBlock(deps, tenantId);
    const wanted = attachments.filter((a) => embeddable(a.content_type));
    const photos = new Map<string, Buffer>();
    for (const [i, a] of wanted.entries()) {
      await setProgress(deps, tenantId, jobId, 15 + (65 * i) / wanted.length, `Reading photo ${i + 1} of ${wanted.length}`);
      const opened = await openAttachment(deps, caller, a.id);
      const chunks: Buffer[] = [];
      for await (const c of opened.body) chunks.push(Buffer.from(c as Uint8Array));
      photos.set(a.id, Buffer.concat(chunks));
    }
    await setProgress(deps, tenantId, jobId, 80, 'Laying out the pages');
    const url = `${deps.config.PUBLIC_URL}/permits/${permitId}`;
    const qr = await QRCode.toBuffer(url, { errorCorrectionLevel: 'M', margin: 1, width: 180 });
    const pdf = await renderDossier(deps, { permit, record, certificates, attachments, photos, checkpoint, url, qr });
    await setProgress(deps, tenantId, jobId, 95, 'Saving the file');
    await withTenant(deps.sequelize, tenantId, () =>
      deps.sequelize.query(
        `UPDATE dossier_jobs SET state = 'done', progress = 100, stage = 'Ready to download', pdf = :pdf, size_bytes = :size, sha256 = :sha, updated_at = :now, finished_at = :now
         WHERE tenant_id = :tenantId AND id = :jobId`,
        { replacements: { tenantId, jobId, pdf, size: pdf.length, sha: createHash('sha256').update(pdf).digest('hex'), now: deps.clock.now() } },
      ),
    );
  } catch (err) {
    deps.logger.error({ err: (err as Error).message, jobId }, 'dossier build failed');
    const message = err instanceof AppError ? err.message : 'The dossier could not be made. Try again; if it fails again, tell your administrator.';
    await withTenant(deps.sequelize, tenantId, () =>
      deps.sequelize.query(`UPDATE dossier_jobs SET state = 'failed', stage = 'Failed', error = :message, updated_at = :now, finished_at = :now WHERE tenant_id = :tenantId AND id = :jobId`, {
        replacements: { tenantId, jobId, message, now: deps.clock.now() },
      }),
    ).catch((e: Error) => deps.logger.error({ err: e.message, jobId }, 'could not record a failed dossier build'));
  }
}

/** Starts a dossier for a permit the caller may read. A permit with few photos is built before the answer; a larger one in the background. */
export async function startDossier(deps: AppDeps, caller: CallerContext, permitId: string): Promise<DossierJob<Date>> {
  const { tenantId } = caller.actor;
  const { jobId, background } = await withTenant(deps.sequelize, tenantId, async () => {
    const permit = authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId), 'permit');
    if (editableStates.includes(permit.state)) throw AppError.unprocessable(`Permit ${permit.number} is still a draft: it has no record for a dossier yet. Use Print permit instead.`);
    const now = deps.clock.now();
    await deps.sequelize.query(`DELETE FROM dossier_jobs WHERE tenant_id = :tenantId AND permit_id = :permitId AND state <> 'running' AND finished_at < :before`, {
      replacements: { tenantId, permitId, before: new Date(now.getTime() - KEEP_MS) },
    });
    const [{ n }] = await deps.sequelize.query<{ n: number }>(
      `SELECT count(*)::int AS n FROM attachments WHERE tenant_id = :tenantId AND permit_id = :permitId AND content_type IN ('image/jpeg', 'image/png')`,
      { replacements: { tenantId, permitId }, type: QueryTypes.SELECT },
    );
    const [row] = await deps.sequelize.query<{ id: string }>(
      `INSERT INTO dossier_jobs (tenant_id, permit_id, requested_by, stage, started_at, updated_at) VALUES (:tenantId, :permitId, :userId, 'Reading the permit', :now, :now) RETURNING id`,
      { replacements: { tenantId, permitId, userId: caller.user.id, now }, type: QueryTypes.SELECT },
    );
    return { jobId: row.id, background: n > BACKGROUND_PHOTOS };
  });
  if (background) {
    // Under an Idempotency-Key the job row commits with the answer: the build starts after that.
    whenCommitted(() => {
      const running = build(deps, caller, jobId, permitId);
      inFlight.add(running);
      void running.finally(() => inFlight.delete(running));
    });
  } else await build(deps, caller, jobId, permitId);
  return dossierJob(deps, caller, permitId, jobId);
}

async function loadJob(deps: AppDeps, caller: CallerContext, permitId: string, jobId: string, withPdf: boolean) {
  const { tenantId } = caller.actor;
  return withTenant(deps.sequelize, tenantId, async () => {
    authorizeRecord(caller.ability, 'read', 'Permit', await findPermit(deps.sequelize, tenantId, permitId), 'permit');
    const [row] = await deps.sequelize.query<JobRow & { pdf?: Buffer | null; number: string }>(
      `SELECT ${JOB_COLUMNS.split(', ').map((c) => `j.${c}`).join(', ')}${withPdf ? ', j.pdf' : ''}, p.number
       FROM dossier_jobs j JOIN permits p ON p.tenant_id = j.tenant_id AND p.id = j.permit_id
       WHERE j.tenant_id = :tenantId AND j.permit_id = :permitId AND j.id = :jobId`,
      { replacements: { tenantId, permitId, jobId }, type: QueryTypes.SELECT },
    );
    if (!row) throw AppError.notFound('dossier');
    return row;
  });
}

/** The build's progress, for any reader of the permit. */
export async function dossierJob(deps: AppDeps, caller: CallerContext, permitId: string, jobId: string): Promise<DossierJob<Date>> {
  return toJob(deps, await loadJob(deps, caller, permitId, jobId, false));
}

/** The finished PDF and the permit number for its file name; 409 while it is still being made. */
export async function dossierPdf(deps: AppDeps, caller: CallerContext, permitId: string, jobId: string): Promise<{ pdf: Buffer; number: string }> {
  const row = await loadJob(deps, caller, permitId, jobId, true);
  const job = toJob(deps, row);
  if (job.state === 'failed') throw AppError.unprocessable(job.error ?? 'The dossier could not be made. Start it again.');
  if (job.state !== 'done' || !row.pdf) throw AppError.conflict(`The dossier is not ready yet (${job.progress} %). Wait for it to finish.`);
  return { pdf: row.pdf, number: row.number };
}
