import { z } from 'zod';
import { uuidSchema } from './common.schema';

/** What on a permit a file belongs to: the permit itself, one isolation step or one gas test. */
export const attachmentEntityTypes = ['permit', 'isolation_step', 'gas_test'] as const;
export type AttachmentEntityType = (typeof attachmentEntityTypes)[number];

export const attachmentEntityLabels: Record<AttachmentEntityType, string> = {
  permit: 'Permit',
  isolation_step: 'Isolation step',
  gas_test: 'Gas test',
};

/** The content types Holdpoint keeps, decided from the file's bytes (never from its name or the browser's word). */
export const attachmentContentTypes = ['image/jpeg', 'image/png', 'image/webp', 'image/heic', 'image/heif', 'application/pdf', 'text/csv'] as const;
export type AttachmentContentType = (typeof attachmentContentTypes)[number];

/** Shown next to the file picker; the server decides. */
export const attachmentAcceptHint = 'Photos (JPEG, PNG, WebP, HEIC), PDF documents or CSV readings.';
export const attachmentAccept = 'image/jpeg,image/png,image/webp,image/heic,image/heif,.heic,.heif,application/pdf,.pdf,text/csv,.csv';

/** The text fields sent beside the file in the multipart upload. */
export const uploadAttachmentFieldsSchema = z
  .strictObject({
    entityType: z.enum(attachmentEntityTypes, { message: 'Attach the file to the permit, an isolation step or a gas test.' }).default('permit'),
    entityId: uuidSchema.optional(),
  })
  .superRefine((v, ctx) => {
    if (v.entityType !== 'permit' && !v.entityId) ctx.addIssue({ code: 'custom', path: ['entityId'], message: 'Say which isolation step or gas test the file belongs to.' });
  });
export type UploadAttachmentFields = z.output<typeof uploadAttachmentFieldsSchema>;

export const attachmentsQuerySchema = z.strictObject({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
  entityType: z.enum(attachmentEntityTypes).optional(),
  entityId: uuidSchema.optional(),
});
export type AttachmentsQuery = z.output<typeof attachmentsQuerySchema>;

export const isInlineContentType = (type: string) => type.startsWith('image/');
