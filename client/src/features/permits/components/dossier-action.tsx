import type { PermitDetail } from '@shared/types/permits';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { useDossierJob, useStartDossier } from '../api/dossier';
import { linkButtonClass } from './link-button';

/** The whole record as one PDF (certificates, gas charts, photos, the signed checkpoint): made on request, with its progress, then downloaded. */
export function DossierAction({ permit }: { permit: Pick<PermitDetail, 'id' | 'number'> }) {
  const start = useStartDossier(permit.id);
  const job = useDossierJob(permit.id, start.data ?? null).data;
  const running = start.isPending || job?.state === 'running';
  return (
    <div className="flex flex-col gap-2" data-testid="dossier-action">
      {job?.state === 'done' && job.downloadUrl ? (
        <a href={job.downloadUrl} download={`${permit.number}-dossier.pdf`} className={`${linkButtonClass.primary} w-full`}>
          Download dossier (PDF)
        </a>
      ) : (
        <Button variant="secondary" className="w-full" busy={running} disabled={running} onClick={() => start.mutate()}>
          Dossier (PDF)
        </Button>
      )}
      <div aria-live="polite">
        {running && job ? (
          <div className="flex flex-col gap-1">
            <p className="text-sm">
              {job.stage}… {job.progress} %
            </p>
            <progress className="h-3 w-full accent-brand" max={100} value={job.progress} aria-label="Dossier progress" />
          </div>
        ) : null}
        {job?.state === 'failed' ? (
          <Notice tone="danger" role="alert">
            {job.error ?? 'The dossier could not be made. Try again.'}
          </Notice>
        ) : null}
        {start.isError ? (
          <Notice tone="danger" role="alert">
            {start.error.message}
          </Notice>
        ) : null}
      </div>
    </div>
  );
}
