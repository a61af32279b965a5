import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ErrorDetail } from '@shared/errors/error-codes';
import type { GasTestPlace } from '@shared/schemas/gas-tests.schema';
import type { GasImportResult } from '@shared/types/gas-tests';
import type { ColumnMapping } from '@shared/gas-tests/csv-readings';
import { ApiError, qs } from '@client/lib/api-client';
import { gasKeys, permitsPrefix } from './keys';

export interface ImportRequest {
  csv: string;
  instrumentId: string;
  place: GasTestPlace;
  placeNote?: string;
  mapping: Partial<ColumnMapping>;
  dryRun: boolean;
}

async function csrfToken(): Promise<string> {
  const res = await fetch('/api/auth/csrf', { credentials: 'same-origin' });
  return (await res.json()).csrfToken as string;
}

/**
 * Sends the file as text/csv (up to 1 MB; a JSON body is capped at 100 kB) with the rest in the
 * query string, reporting upload progress from 0 to 1. Errors come back as ApiError like every call.
 */
export async function postGasLog(permitId: string, req: ImportRequest, onProgress: (fraction: number) => void): Promise<GasImportResult> {
  const token = await csrfToken();
  const query = qs({ instrumentId: req.instrumentId, place: req.place, placeNote: req.placeNote, dryRun: req.dryRun ? 'true' : 'false', ...req.mapping });
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', `/api/permits/${encodeURIComponent(permitId)}/gas-tests/import${query}`);
    xhr.setRequestHeader('content-type', 'text/csv');
    xhr.setRequestHeader('accept', 'application/json');
    xhr.setRequestHeader('x-csrf-token', token);
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => e.lengthComputable && onProgress(e.loaded / e.total);
    xhr.onerror = () => reject(new ApiError(0, 'network', 'No connection to Holdpoint. Check the signal and try again.'));
    xhr.onload = () => {
      onProgress(1);
      let body: { error?: { code: string; message: string; details?: ErrorDetail[] } & Record<string, unknown> } | null = null;
      try {
        body = JSON.parse(xhr.responseText);
      } catch {
        body = null;
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(body as unknown as GasImportResult);
      const err = body?.error;
      const { code, message, details, ...rest } = err ?? { code: 'unknown', message: `The server answered ${xhr.status}.` };
      reject(new ApiError(xhr.status, code, message, details ?? [], rest));
    };
    xhr.send(req.csv);
  });
}

export function useImportGasLog(permitId: string, onProgress: (fraction: number) => void) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (req: ImportRequest) => postGasLog(permitId, req, onProgress),
    onSuccess: (result) =>
      result.dryRun ? undefined : Promise.all([qc.invalidateQueries({ queryKey: gasKeys.permit(permitId) }), qc.invalidateQueries({ queryKey: permitsPrefix })]),
  });
}
