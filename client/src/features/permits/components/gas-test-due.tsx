import { formatInZone } from '@shared/time/zone';
import { describeGasDue } from '../lib/time-left';
import { useNow } from '../hooks/use-now';

/** "Next gas test due in 12 minutes" — in the danger colour once it is overdue. */
export function GasTestDue({ due, timeZone, compact = false }: { due: string | null; timeZone: string; compact?: boolean }) {
  const now = useNow();
  if (!due) return null;
  const { overdue, text } = describeGasDue(now, due);
  return (
    <span className={`text-sm ${overdue ? 'font-semibold text-danger' : 'text-ink'}`} title={formatInZone(due, timeZone)} data-testid="gas-test-due">
      {compact ? 'Gas test ' : 'Next gas test '}
      {text}
    </span>
  );
}
