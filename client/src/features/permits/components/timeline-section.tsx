import { auditActionLabel, stateLabel } from '@shared/permit/record-words';
import { roleLabels, type Role } from '@shared/abilities/roles';
import { formatInZone } from '@shared/time/zone';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';

export function TimelineSection({ permit, timeZone }: { permit: PermitDetail; timeZone: string }) {
  return (
    <Card>
      <h2 className="mb-2 text-lg font-semibold">Timeline</h2>
      {permit.timeline.length ? (
        <ol className="flex flex-col gap-2 text-sm" data-testid="timeline">
          {permit.timeline.map((e) => {
            const label = typeof e.data?.label === 'string' ? e.data.label : null;
            return (
              <li key={String(e.seq)} className="border-l-4 border-brand-soft pl-3">
                <p className="font-semibold">
                  {auditActionLabel(e.action)}
                  {e.entityType === 'permit' && e.fromState && e.toState && e.fromState !== e.toState ? (
                    <span className="font-normal">
                      {' '}
                      · {stateLabel(e.fromState)} → {stateLabel(e.toState)}
                    </span>
                  ) : null}
                </p>
                <p className="text-ink-soft">
                  {e.actorName ?? 'Holdpoint'}
                  {e.actorRole ? ` (${roleLabels[e.actorRole as Role] ?? e.actorRole})` : ''} · {formatInZone(e.occurredAt, timeZone)}
                </p>
                {label ? <p className="break-words">{label}</p> : null}
                {e.reason ? <p className="break-words whitespace-pre-line">Reason: {e.reason}</p> : null}
              </li>
            );
          })}
        </ol>
      ) : (
        <p className="text-sm text-ink-soft">Nothing recorded yet.</p>
      )}
    </Card>
  );
}
