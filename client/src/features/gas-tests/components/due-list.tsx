import type { DueTimeView } from '@shared/types/timed-checks';
import { formatInZone } from '@shared/time/zone';
import { dueText } from '../lib/site-time';
import { useNow } from '../hooks/use-now';

/** Each timed check with its due time; an overdue one in the danger colour, with the word "overdue" too. */
export function DueList({ due, timeZone, kinds, testId = 'due-list' }: { due: DueTimeView[]; timeZone: string; kinds?: DueTimeView['kind'][]; testId?: string }) {
  const now = useNow();
  const shown = due.filter((d) => d.dueAt && (!kinds || kinds.includes(d.kind)));
  if (!shown.length) return <p className="text-sm text-ink-soft">Nothing is due right now.</p>;
  return (
    <ul className="flex flex-col gap-2" data-testid={testId}>
      {shown.map((d) => {
        const { overdue, text } = dueText(d.dueAt!, now);
        return (
          <li
            key={d.kind}
            data-kind={d.kind}
            data-overdue={overdue || undefined}
            className={`flex flex-wrap items-baseline justify-between gap-2 rounded-card border-l-4 px-3 py-2 ${overdue ? 'border-danger bg-danger-soft' : 'border-info bg-info-soft'}`}
          >
            <span className="font-semibold">{d.label}</span>
            <span className={overdue ? 'font-bold text-danger' : ''}>
              {overdue ? '⚠ ' : ''}
              {text} <span className="text-sm font-normal text-ink-soft">({formatInZone(d.dueAt, timeZone, 'dayTime')})</span>
            </span>
            {d.intervalMinutes ? <span className="w-full text-xs text-ink-soft">Every {d.intervalMinutes} minutes.</span> : null}
          </li>
        );
      })}
    </ul>
  );
}
