// Files on a permit: photos of isolations, gas-test printouts, drawings.
//   POST /api/permits/:id/attachments   who may create an Attachment on the permit (authoriser; contractor lead, technician,
//                                       gas tester of the permit's contractor): multipart, field "file", optional entityType/entityId
//   GET  /api/permits/:id/attachments   readers of the permit: the permit's files, paged
//   GET  /api/attachments/:id           readers of the permit: the bytes (images inline, everything else as a download)
import { Router, type NextFunction, type Request, type RequestHandler, type Response } from 'express';
import multer from 'multer';
import { resolve, sep } from 'node:path';
import { pipeline } from 'node:stream/promises';
import { attachmentsQuerySchema, uploadAttachmentFieldsSchema } from '@shared/schemas/attachment.schema';
import { uuidSchema } from '@shared/schemas/common.schema';
import type { AppDeps } from '../../deps';
import { AppError } from '../../errors/app-error';
import { actorOf, requireTenant } from '../../middleware/authenticate';
import { parse } from '../../middleware/validate';
import { idempotentBody } from '../../middleware/idempotency';
import { clientIp } from '../../lib/client-ip';
import type { CallerContext } from '../../lib/caller';
import { addAttachment, checkMayUpload, listAttachments, openAttachment } from './attachments.service';
import { contentDisposition } from './file-checks';

const megabytes = (bytes: number) => (bytes >= 1024 * 1024 ? `${Math.round((bytes / (1024 * 1024)) * 10) / 10} MB` : `${Math.max(1, Math.round(bytes / 1024))} KB`);

/** One file in memory, bounded; multer's errors become the one error shape with plain words. */
function singleUpload(maxBytes: number): RequestHandler {
  const upload = multer({
    storage: multer.memoryStorage(),
    // Browsers send UTF-8 file names without saying so.
    defParamCharset: 'utf8',
    limits: { fileSize: maxBytes, files: 1, fields: 4, fieldSize: 200, parts: 6, headerPairs: 50 },
  }).single('file');
  return (req, res, next) => {
    upload(req, res, (err?: unknown) => {
      if (!err) return next();
      if (err instanceof multer.MulterError) {
        if (err.code === 'LIMIT_FILE_SIZE') return next(new AppError('payload_too_large', `The file is larger than the ${megabytes(maxBytes)} limit.`, [{ path: 'file', message: `At most ${megabytes(maxBytes)}.` }]));
        if (err.code === 'LIMIT_UNEXPECTED_FILE' || err.code === 'LIMIT_FILE_COUNT')
          return next(AppError.validation('Send exactly one file, in the form field "file".', [{ path: 'file', message: 'One file only.' }]));
        return next(AppError.validation('The upload form has too many or too long fields.', [{ path: err.field ?? 'form', message: err.message }]));
      }
      next(AppError.validation('The upload could not be read. Try again.', [{ path: 'file', message: 'The form data was incomplete or malformed.' }]));
    });
  };
}

export function createAttachmentsRouter(deps: AppDeps) {
  const uploadDir = resolve(deps.config.UPLOAD_DIR);
  const clientDist = resolve(deps.config.CLIENT_DIST);
  // Files are served only through the authorised route below, never as static files.
  if (uploadDir === clientDist || uploadDir.startsWith(clientDist + sep)) throw new Error('UPLOAD_DIR must not be inside CLIENT_DIST, which is served to everyone.');

  const router = Router();
  router.use(['/permits/:id/attachments', '/attachments'], requireTenant);
  const caller = (req: Request): CallerContext => ({ ...actorOf(req), ip: clientIp(req) });
  const permitId = (req: Request) => parse(uuidSchema, req.params.id, 'path');

  const mayUpload = async (req: Request, _res: Response, next: NextFunction) => {
    await checkMayUpload(deps, caller(req), permitId(req));
    next();
  };

  // The Idempotency-Key covers the file too: idempotentBody runs once multer has read it.
  router.post('/permits/:id/attachments', mayUpload, singleUpload(deps.config.UPLOAD_MAX_BYTES), idempotentBody(deps), async (req, res) => {
    const fields = parse(uploadAttachmentFieldsSchema, { ...req.body }, 'upload');
    res.status(201).json(await addAttachment(deps, caller(req), permitId(req), req.file, fields));
  });

  router.get('/permits/:id/attachments', async (req, res) => {
    res.json(await listAttachments(deps, caller(req), permitId(req), parse(attachmentsQuerySchema, req.query, 'query')));
  });

  router.get('/attachments/:id', async (req, res) => {
    const id = parse(uuidSchema, req.params.id, 'path');
    const { summary, body } = await openAttachment(deps, caller(req), id);
    try {
      res.setHeader('Content-Type', summary.contentType);
      res.setHeader('Content-Length', String(summary.sizeBytes));
      res.setHeader('Content-Disposition', contentDisposition(summary.inline ? 'inline' : 'attachment', summary.originalName));
      res.setHeader('X-Content-Type-Options', 'nosniff');
      // Whatever the bytes are, they never run as a page of ours.
      res.setHeader('Content-Security-Policy', "default-src 'none'; img-src 'self'; style-src 'unsafe-inline'; sandbox");
      res.setHeader('Cache-Control', 'private, no-store');
      res.setHeader('ETag', `"${summary.sha256}"`);
      await pipeline(body, res);
    } catch (err) {
      // Once bytes are on their way there is no error shape to send; a dropped download just ends.
      if (!res.headersSent) throw err;
      req.log?.info({ err: (err as Error).message, attachmentId: id }, 'download ended early');
    } finally {
      body.destroy();
    }
  });

  return router;
}
