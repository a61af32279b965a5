import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ApiErrorBody } from '@shared/errors/error-codes';
import type { AttachmentEntityType } from '@shared/schemas/attachment.schema';
import type { AttachmentSummary } from '@shared/types/attachments';
import { ApiError } from '@client/lib/api-client';
import { markOffline } from '@client/lib/connection';
import { isQueued, newIdempotencyKey, sendOrQueue, type Queued } from '@client/lib/outbox/send-or-queue';
import { attachmentsKey } from './get-attachments';

export interface UploadInput {
  file: File;
  entityType?: AttachmentEntityType;
  entityId?: string;
}

async function csrfToken(): Promise<string> {
  let res: Response;
  try {
    res = await fetch('/api/auth/csrf', { credentials: 'same-origin' });
  } catch {
    markOffline();
    throw new ApiError(0, 'network', 'The upload did not reach Holdpoint. Check the signal and try again.');
  }
  if (!res.ok) throw new ApiError(res.status, 'csrf_failed', 'Holdpoint could not prepare the upload. Reload the page and try again.');
  return (await res.json()).csrfToken as string;
}

function send(url: string, form: FormData, token: string, onProgress: (fraction: number) => void, idempotencyKey: string): Promise<{ status: number; body: unknown }> {
  return new Promise((resolve, reject) => {
    // XMLHttpRequest, not fetch: only it reports upload progress.
    const xhr = new XMLHttpRequest();
    xhr.open('POST', url);
    xhr.withCredentials = true;
    xhr.setRequestHeader('x-csrf-token', token);
    xhr.setRequestHeader('accept', 'application/json');
    xhr.setRequestHeader('idempotency-key', idempotencyKey);
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) onProgress(e.loaded / e.total);
    };
    xhr.onload = () => {
      let body: unknown = null;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : null;
      } catch {
        body = null;
      }
      resolve({ status: xhr.status, body });
    };
    xhr.onerror = () => {
      markOffline();
      reject(new ApiError(0, 'network', 'The upload did not reach Holdpoint. Check the signal and try again.'));
    };
    xhr.onabort = () => reject(new ApiError(0, 'aborted', 'The upload was stopped.'));
    xhr.send(form);
  });
}

/** Uploads one file to a permit, reporting progress from 0 to 1; server refusals become an ApiError with the server's words. */
export async function uploadAttachment(permitId: string, input: UploadInput, onProgress: (fraction: number) => void, idempotencyKey = newIdempotencyKey()): Promise<AttachmentSummary> {
  const form = new FormData();
  if (input.entityType) form.append('entityType', input.entityType);
  if (input.entityId) form.append('entityId', input.entityId);
  form.append('file', input.file, input.file.name);
  const url = `/api/permits/${encodeURIComponent(permitId)}/attachments`;
  let res = await send(url, form, await csrfToken(), onProgress, idempotencyKey);
  const code = (res.body as ApiErrorBody | null)?.error?.code;
  // A token from before a sign-in or a restart: fetch a fresh one and try once more.
  if (res.status === 403 && code === 'csrf_failed') res = await send(url, form, await csrfToken(), onProgress, idempotencyKey);
  if (res.status >= 200 && res.status < 300) return res.body as AttachmentSummary;
  const err = (res.body as ApiErrorBody | null)?.error;
  const fallback: Record<number, string> = {
    413: 'The file is too large to upload.',
    415: 'Files of this kind are not accepted.',
  };
  throw new ApiError(res.status, err?.code ?? 'unknown', err?.message ?? fallback[res.status] ?? `The upload failed (the server answered ${res.status}).`, err?.details ?? []);
}

/** A photo kept for the outbox is made smaller first: phone pictures of several MB would fill the device and take long to send on a weak signal. */
async function compressPhoto(file: File): Promise<File> {
  if (!file.type.startsWith('image/') || file.type === 'image/gif' || file.type === 'image/svg+xml') return file;
  const { default: imageCompression } = await import('browser-image-compression');
  // No web worker: the library would fetch its worker script from outside, which fails without signal.
  const smaller = await imageCompression(file, { maxSizeMB: 0.5, maxWidthOrHeight: 1920, useWebWorker: false });
  return smaller.size < file.size ? new File([smaller], file.name, { type: smaller.type || file.type }) : file;
}

async function uploadOrQueue(permitId: string, input: UploadInput, onProgress: (fraction: number) => void): Promise<AttachmentSummary | Queued> {
  const fields: Record<string, string> = {};
  if (input.entityType) fields.entityType = input.entityType;
  if (input.entityId) fields.entityId = input.entityId;
  return sendOrQueue(
    async () => {
      const file = await compressPhoto(input.file);
      return {
        kind: 'photo',
        title: `Photo: ${input.file.name}`,
        permitId,
        path: `/api/permits/${encodeURIComponent(permitId)}/attachments`,
        body: fields,
        photo: { blob: file, name: input.file.name, type: file.type, originalSize: input.file.size },
        observedAt: new Date(input.file.lastModified || Date.now()).toISOString(),
        invalidate: [attachmentsKey(permitId)],
      };
    },
    (key) => uploadAttachment(permitId, input, onProgress, key),
  );
}

export function useUploadAttachment(permitId: string, onProgress: (fraction: number) => void) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UploadInput) => uploadOrQueue(permitId, input, onProgress),
    onSuccess: (result) => (isQueued(result) ? undefined : qc.invalidateQueries({ queryKey: attachmentsKey(permitId) })),
  });
}
