import type { AttachmentContentType, AttachmentEntityType } from '../schemas/attachment.schema';
import type { Moment } from './moment';

/** One file of GET /api/permits/:id/attachments, and the answer of an upload. */
export interface AttachmentSummary<Time extends Moment = string> {
  id: string;
  permitId: string;
  entityType: AttachmentEntityType;
  entityId: string;
  originalName: string;
  contentType: AttachmentContentType;
  sizeBytes: number;
  sha256: string;
  uploadedBy: string;
  uploadedByName: string;
  createdAt: Time;
  /** The only way to the bytes: an authorised route. */
  downloadUrl: string;
  /** Images open in the browser; everything else downloads. */
  inline: boolean;
}
