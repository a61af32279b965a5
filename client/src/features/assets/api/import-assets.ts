import { useMutation, useQueryClient } from '@tanstack/react-query';
import type { ImportReport } from '@shared/assets/types';
import { api, qs } from '@client/lib/api-client';

export const EXPORT_URL = '/api/exports/assets.csv';

/** Sends the file as a multipart upload (up to 2 MB); a dry run only checks it. */
export function useImportAssets() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ file, dryRun }: { file: File; dryRun: boolean }) => {
      const body = new FormData();
      body.append('file', file);
      return api.post<ImportReport>(`/api/imports/assets${qs({ dryRun: dryRun ? 'true' : undefined })}`, body);
    },
    onSuccess: (report) => {
      if (report.applied) return qc.invalidateQueries({ queryKey: ['assets'] });
    },
  });
}
