import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ApiErrorBody } from '@shared/errors/error-codes';
import type { AttachmentEntityType } from '@shared/schemas/attachment.schema';
import type { AttachmentSummary } from '@shared/types/attachments';
import { ApiError } from '@client/lib/api-client';
import { attachmentsKey } from './get-attachments';

export interface UploadInput {
  file: File;
  entityType?: AttachmentEntityType;
  entityId?: string;
}

async function csrfToken(): Promise<string> {
  const res = await fetch('/api/auth/csrf', { credentials: 'same-origin' });
  if (!res.ok) throw new ApiError(res.status, 'csrf_failed', 'Holdpoint could not prepare the upload. Reload the page and try again.');
  return (await res.json()).csrfToken as string;
}

function send(url: string, form: FormData, token: string, onProgress: (fraction: number) => void): Promise<{ status: number; body: unknown }> {
  return new Promise((resolve, reject) => {
    // XMLHttpRequest, not fetch: only it reports upload progress.
    const xhr = new XMLHttpRequest();
    xhr.open('POST', url);
    xhr.withCredentials = true;
    xhr.setRequestHeader('x-csrf-token', token);
    xhr.setRequestHeader('accept', 'application/json');
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
    xhr.onerror = () => reject(new ApiError(0, 'network', 'The upload did not reach Holdpoint. Check the signal and try again.'));
    xhr.onabort = () => reject(new ApiError(0, 'aborted', 'The upload was stopped.'));
    xhr.send(form);
  });
}

/** Uploads one file to a permit, reporting progress from 0 to 1; server refusals become an ApiError with the server's words. */
export async function uploadAttachment(permitId: string, input: UploadInput, onProgress: (fraction: number) => void): Promise<AttachmentSummary> {
  const form = new FormData();
  if (input.entityType) form.append('entityType', input.entityType);
  if (input.entityId) form.append('entityId', input.entityId);
  form.append('file', input.file, input.file.name);
  const url = `/api/permits/${encodeURIComponent(permitId)}/attachments`;
  let res = await send(url, form, await csrfToken(), onProgress);
  const code = (res.body as ApiErrorBody | null)?.error?.code;
  // A token from before a sign-in or a restart: fetch a fresh one and try once more.
  if (res.status === 403 && code === 'csrf_failed') res = await send(url, form, await csrfToken(), onProgress);
  if (res.status >= 200 && res.status < 300) return res.body as AttachmentSummary;
  const err = (res.body as ApiErrorBody | null)?.error;
  const fallback: Record<number, string> = {
    413: 'The file is too large to upload.',
    415: 'Files of this kind are not accepted.',
  };
  throw new ApiError(res.status, err?.code ?? 'unknown', err?.message ?? fallback[res.status] ?? `The upload failed (the server answered ${res.status}).`, err?.details ?? []);
}

export function useUploadAttachment(permitId: string, onProgress: (fraction: number) => void) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: UploadInput) => uploadAttachment(permitId, input, onProgress),
    onSuccess: () => qc.invalidateQueries({ queryKey: attachmentsKey(permitId) }),
  });
}
