import type { IsolationStep } from '@shared/types/isolations';

/**
 * The A4 sheet of QR labels for the locks and tags recorded on this permit's steps; the browser
 * downloads it with the session cookie. Shown once a lock or tag is on a step.
 */
export function PrintLabelsLink({ permitId, steps }: { permitId: string; steps: IsolationStep[] }) {
  const count = steps.reduce((n, s) => n + (s.lockNumber ? 1 : 0) + (s.tagNumber ? 1 : 0), 0);
  if (!count) return null;
  return (
    <a
      href={`/api/permits/${encodeURIComponent(permitId)}/labels`}
      download
      className="inline-flex min-h-11 items-center justify-center gap-2 self-start rounded-md border border-line bg-surface px-4 font-semibold text-ink no-underline hover:bg-brand-soft"
    >
      Print labels for these locks and tags
    </a>
  );
}
