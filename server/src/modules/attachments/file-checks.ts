import { fileTypeFromBuffer } from 'file-type';
import type { AttachmentContentType } from '@shared/schemas/attachment.schema';

const MAX_NAME = 120;

// C0 and C1 control characters (NUL included), and the bidirectional controls that can make
// "photo‮gpj.exe" read as "photoexe.jpg" in a list.
// eslint-disable-next-line no-control-regex -- removing control characters is the point
const unsafeCharacters = /[\u0000-\u001F\u007F-\u009F\u200E\u200F\u202A-\u202E\u2066-\u2069]/g;

/**
 * The name a person gave the file, made safe to show and to put in a Content-Disposition header.
 * It is only ever a label: files are stored under random names, never under this one.
 */
export function sanitiseFileName(raw: string | undefined | null): string {
  let name = String(raw ?? '').normalize('NFC').replace(unsafeCharacters, '');
  // Last segment of either kind of path ("../../etc/passwd", "C:\\Users\\x\\photo.jpg").
  name = name.split(/[\\/]/).pop() ?? '';
  // No leading dots (".." or hidden files) and no trailing dots or spaces (Windows drops them).
  name = name.trim().replace(/^\.+/, '').replace(/[. ]+$/, '').trim();
  if (!name) return 'file';
  const chars = [...name];
  if (chars.length > MAX_NAME) {
    // Keep a short extension so the shortened name still says what kind of file it is.
    const dot = chars.lastIndexOf('.');
    const ext = dot > 0 && chars.length - dot <= 10 ? chars.slice(dot) : [];
    name = chars.slice(0, MAX_NAME - ext.length).join('').trimEnd() + ext.join('');
  }
  return name;
}

const allowedSniffed: ReadonlySet<string> = new Set<AttachmentContentType>(['image/jpeg', 'image/png', 'image/webp', 'image/heic', 'image/heif', 'application/pdf']);

export type SniffResult = { ok: true; contentType: AttachmentContentType } | { ok: false; message: string };

/**
 * Decides the content type from the bytes. The browser's declared type and the file's extension are
 * not trusted, with one exception: CSV has no signature, so a file named .csv is accepted as CSV
 * when its bytes are valid UTF-8 text without NUL bytes.
 */
export async function sniffContentType(bytes: Uint8Array, name: string): Promise<SniffResult> {
  const found = await fileTypeFromBuffer(bytes);
  if (found) {
    if (allowedSniffed.has(found.mime)) return { ok: true, contentType: found.mime as AttachmentContentType };
    return { ok: false, message: `Files of this kind (${found.ext.toUpperCase()}) are not accepted. Attach a photo (JPEG, PNG, WebP, HEIC), a PDF or a CSV file.` };
  }
  if (/\.csv$/i.test(name)) {
    if (bytes.includes(0)) return { ok: false, message: 'That .csv file contains binary data, not text.' };
    try {
      new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    } catch {
      return { ok: false, message: 'That .csv file is not UTF-8 text. Save it as "CSV UTF-8" and try again.' };
    }
    return { ok: true, contentType: 'text/csv' };
  }
  return { ok: false, message: 'Holdpoint could not recognise this file. Attach a photo (JPEG, PNG, WebP, HEIC), a PDF or a CSV file.' };
}

/** RFC 6266 / RFC 8187: an ASCII fallback name and the exact name percent-encoded as UTF-8. */
export function contentDisposition(kind: 'inline' | 'attachment', name: string): string {
  const ascii = name.replace(/[^\x20-\x7E]/g, '_').replace(/["\\;]/g, '_');
  const encoded = encodeURIComponent(name).replace(/['()*]/g, (c) => `%${c.charCodeAt(0).toString(16).toUpperCase()}`);
  return `${kind}; filename="${ascii}"; filename*=UTF-8''${encoded}`;
}
