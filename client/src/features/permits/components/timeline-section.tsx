import { permitEventLabels, type PermitEvent } from '@shared/permit/state-machine';
import { permitStateLabels, type PermitState } from '@shared/permit/states';
import { roleLabels, type Role } from '@shared/abilities/roles';
import { formatInZone } from '@shared/time/zone';
import { Card } from '@client/components/ui/page';
import type { PermitDetail } from '@shared/types/permits';

const actionWords: Record<string, string> = {
  created: 'Created',
  edited: 'Edited',
  hot_work_stopped: 'Hot work stopped',
  checklist_confirmed: 'Checklist item confirmed',
  checklist_unconfirmed: 'Checklist item unconfirmed',
  walkdown_confirmed: 'Walk-down item confirmed',
  walkdown_unconfirmed: 'Walk-down item unconfirmed',
  proving_started: 'Hold test started',
  section_proved: 'Section proved dead',
  proving_failed: 'Hold test failed',
};

const actionLabel = (a: string) => actionWords[a] ?? permitEventLabels[a as PermitEvent] ?? a.charAt(0).toUpperCase() + a.slice(1).replace(/_/g, ' ');
const stateLabel = (s: string | null) => (s ? (permitStateLabels[s as PermitState] ?? s.replace(/_/g, ' ')) : '');

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
                  {actionLabel(e.action)}
                  {e.fromState && e.toState && e.fromState !== e.toState ? (
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
