import { resumeNeedsAuthoriser, suspendedByLabels } from '@shared/permit/suspension';
import { formatInZone } from '@shared/time/zone';
import type { PermitDetail } from '@shared/types/permits';
import { Notice } from '@client/components/ui/notice';

/** Who stopped the work, when and why, and who may let it start again (issue 17: suspension authority). */
export function SuspensionNotice({ permit, timeZone }: { permit: PermitDetail; timeZone: string }) {
  const kind = permit.suspendedByKind;
  if (!kind) return null;
  const by = kind === 'system' || !permit.suspendedByName ? suspendedByLabels[kind] : `${permit.suspendedByName} (${suspendedByLabels[kind]})`;
  return (
    <Notice tone="danger" title="Work is stopped" role="status">
      <div data-testid="suspension-notice" className="flex flex-col gap-1">
        <p>
          Suspended by {by} on {formatInZone(permit.suspendedAt, timeZone)}.
        </p>
        {permit.suspensionReason ? <p className="break-words whitespace-pre-line">Reason: {permit.suspensionReason}</p> : null}
        <p className="font-semibold">
          {resumeNeedsAuthoriser(kind)
            ? 'Work starts again only when an authoriser re-validates the permit and gives a reason.'
            : 'The lead stopped the work and may start it again, or an authoriser may.'}
        </p>
      </div>
    </Notice>
  );
}
