import { useId, useRef, useState, type FormEvent } from 'react';
import { subject } from '@casl/ability';
import { attachmentAccept, attachmentAcceptHint, attachmentEntityLabels } from '@shared/schemas/attachment.schema';
import type { AttachmentSummary } from '@shared/types/attachments';
import { closedStates, type PermitState } from '@shared/permit/states';
import { formatInZone } from '@shared/time/zone';
import { Button } from '@client/components/ui/button';
import { Notice } from '@client/components/ui/notice';
import { Card, EmptyState, Loading } from '@client/components/ui/page';
import { useToast } from '@client/components/ui/toast';
import { useAbility } from '@client/lib/ability';
import { useMe } from '@client/features/auth';
import { ApiError } from '@client/lib/api-client';
import { useAttachments } from './api/get-attachments';
import { useUploadAttachment } from './api/upload-attachment';
import { isQueued, QUEUED_MESSAGE } from '@client/lib/outbox/send-or-queue';
import { sizeText } from '@client/lib/outbox/outbox-rules';

/** The fields of a permit this section needs; the permit page's record has them all. */
export interface AttachmentsPermit {
  id: string;
  tenantId: string;
  contractorOrganisationId: string;
  state?: PermitState;
}

const typeLabels: Record<string, string> = {
  'image/jpeg': 'JPEG photo',
  'image/png': 'PNG image',
  'image/webp': 'WebP image',
  'image/heic': 'HEIC photo',
  'image/heif': 'HEIF photo',
  'application/pdf': 'PDF document',
  'text/csv': 'CSV readings',
};
/** Browsers show these as thumbnails; HEIC mostly not. */
const thumbnailTypes = new Set(['image/jpeg', 'image/png', 'image/webp']);

export function formatBytes(bytes: number) {
  if (bytes < 1024) return `${bytes} bytes`;
  if (bytes < 1024 * 1024) return `${Math.round(bytes / 102.4) / 10} KB`;
  return `${Math.round(bytes / (1024 * 102.4)) / 10} MB`;
}

/** Photos and documents on a permit in a card of their own: heading, upload with progress, the list. */
export function AttachmentsSection({ permit }: { permit: AttachmentsPermit }) {
  const headingId = useId();
  return (
    <Card className="min-w-0">
      <section aria-labelledby={headingId} className="flex flex-col gap-4">
        <h2 id={headingId} className="text-lg font-bold text-brand-strong">
          Files and photos
        </h2>
        <AttachmentsPanel permit={permit} />
      </section>
    </Card>
  );
}

/** The same without card and heading, for a page that supplies both (the permit page's attachments slot). */
export function AttachmentsPanel({ permit }: { permit: AttachmentsPermit }) {
  const ability = useAbility();
  const [page, setPage] = useState(1);
  const list = useAttachments(permit.id, page);
  const mayAdd =
    ability.can('create', subject('Attachment', { tenantId: permit.tenantId, contractorOrganisationId: permit.contractorOrganisationId })) && !(permit.state && closedStates.includes(permit.state));
  const data = list.data;
  const pages = data ? Math.max(1, Math.ceil(data.total / data.pageSize)) : 1;

  return (
    <div className="flex min-w-0 flex-col gap-4">
      {mayAdd ? <UploadForm permitId={permit.id} onUploaded={() => setPage(1)} /> : null}
      {list.isLoading ? (
        <Loading label="Loading files…" />
      ) : list.error ? (
        <Notice tone="danger" role="alert" title="The files could not be listed">
          {list.error.message}
        </Notice>
      ) : !data || data.items.length === 0 ? (
        <EmptyState title="No files yet">{mayAdd ? 'Add isolation photos, gas-test printouts or drawings above.' : null}</EmptyState>
      ) : (
        <>
          <ul className="flex flex-col divide-y divide-line rounded-card border border-line" aria-label="Files on this permit">
            {data.items.map((a) => (
              <AttachmentItem key={a.id} attachment={a} />
            ))}
          </ul>
          {pages > 1 ? (
            <nav aria-label="Pages of files" className="flex flex-wrap items-center gap-2 text-sm">
              <Button variant="secondary" disabled={page <= 1} onClick={() => setPage((p) => p - 1)}>
                Previous
              </Button>
              <span>
                Page {page} of {pages} · {data.total} files
              </span>
              <Button variant="secondary" disabled={page >= pages} onClick={() => setPage((p) => p + 1)}>
                Next
              </Button>
            </nav>
          ) : null}
        </>
      )}
    </div>
  );
}

function AttachmentItem({ attachment: a }: { attachment: AttachmentSummary }) {
  // A site time with its zone, whatever zone the browser is in.
  const timeZone = useMe().data?.activeTenant?.timeZone ?? 'UTC';
  return (
    <li className="flex min-w-0 items-start gap-3 p-3">
      {thumbnailTypes.has(a.contentType) ? (
        <img src={a.downloadUrl} alt="" loading="lazy" className="size-12 shrink-0 rounded border border-line object-cover" />
      ) : (
        <span aria-hidden className="flex size-12 shrink-0 items-center justify-center rounded border border-line bg-paper text-xs font-semibold text-ink-soft">
          {a.contentType === 'application/pdf' ? 'PDF' : a.contentType === 'text/csv' ? 'CSV' : 'FILE'}
        </span>
      )}
      <div className="min-w-0 flex-1">
        <a
          href={a.downloadUrl}
          {...(a.inline ? { target: '_blank', rel: 'noopener noreferrer' } : { download: a.originalName })}
          className="inline-flex min-h-11 max-w-full items-center font-semibold break-all text-brand underline underline-offset-2 focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-brand"
        >
          {a.originalName}
          <span className="sr-only">{a.inline ? ' (opens in a new tab)' : ' (downloads)'}</span>
        </a>
        <p className="text-sm text-ink-soft">
          {typeLabels[a.contentType] ?? a.contentType} · {formatBytes(a.sizeBytes)}
          {a.entityType !== 'permit' ? ` · ${attachmentEntityLabels[a.entityType]}` : ''}
        </p>
        <p className="text-sm text-ink-soft">
          Added by {a.uploadedByName} on <time dateTime={a.createdAt}>{formatInZone(a.createdAt, timeZone)}</time>
        </p>
      </div>
    </li>
  );
}

function UploadForm({ permitId, onUploaded }: { permitId: string; onUploaded: () => void }) {
  const toast = useToast();
  const inputId = useId();
  const hintId = useId();
  const errorId = useId();
  const inputRef = useRef<HTMLInputElement>(null);
  const [file, setFile] = useState<File | null>(null);
  const [progress, setProgress] = useState(0);
  const upload = useUploadAttachment(permitId, setProgress);
  const [problem, setProblem] = useState<string | null>(null);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!file) {
      setProblem('Choose a file first.');
      return;
    }
    if (file.size === 0) {
      setProblem('That file is empty (0 bytes). Choose another.');
      return;
    }
    setProblem(null);
    setProgress(0);
    upload.mutate(
      { file },
      {
        onSuccess: (added) => {
          if (isQueued(added)) toast('success', `${QUEUED_MESSAGE}${added.sizes ? ` Photo made smaller: ${sizeText(added.sizes.before)} → ${sizeText(added.sizes.after)}.` : ''}`);
          else toast('success', `Added “${added.originalName}”.`);
          setFile(null);
          if (inputRef.current) inputRef.current.value = '';
          onUploaded();
        },
        onError: (err) => setProblem(describeUploadError(err)),
      },
    );
  };

  return (
    <form onSubmit={submit} className="flex flex-col gap-3" noValidate>
      <div className="flex flex-col gap-1">
        <label htmlFor={inputId} className="text-sm font-semibold text-ink">
          File to add
        </label>
        <input
          ref={inputRef}
          id={inputId}
          type="file"
          accept={attachmentAccept}
          aria-describedby={[hintId, problem ? errorId : ''].filter(Boolean).join(' ')}
          aria-invalid={problem ? true : undefined}
          onChange={(e) => {
            setFile(e.target.files?.[0] ?? null);
            setProblem(null);
          }}
          className="min-h-11 w-full max-w-full rounded-md border border-line bg-surface px-3 py-2 text-base text-ink file:mr-3 file:min-h-9 file:rounded file:border-0 file:bg-brand-soft file:px-3 file:font-semibold focus-visible:outline-2 focus-visible:outline-offset-2 focus-visible:outline-brand"
        />
        <p id={hintId} className="text-xs text-ink-soft">
          {attachmentAcceptHint}
        </p>
        {problem ? (
          <p id={errorId} role="alert" className="text-sm font-medium text-danger">
            {problem}
          </p>
        ) : null}
      </div>
      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" busy={upload.isPending}>
          Upload
        </Button>
        {upload.isPending ? (
          <div className="flex min-w-0 flex-1 items-center gap-2" role="status">
            <progress max={1} value={progress} aria-label="Upload progress" className="h-3 w-full max-w-xs accent-brand" />
            <span className="text-sm tabular-nums">{Math.round(progress * 100)} %</span>
          </div>
        ) : null}
      </div>
    </form>
  );
}

function describeUploadError(err: unknown): string {
  if (err instanceof ApiError) {
    if (err.status === 413) return `${err.message} Make the photo smaller or split the document.`;
    if (err.status === 415) return err.message;
    if (err.status === 401) return 'Your session has ended. Sign in again, then upload the file.';
    return err.message;
  }
  return 'The upload failed. Try again.';
}
