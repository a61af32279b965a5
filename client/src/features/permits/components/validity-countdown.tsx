import { describeValidity } from '../lib/time-left';
import { useNow } from '../hooks/use-now';

const phaseClass = { not_yet: 'text-info', valid: 'text-safe', ended: 'text-danger' } as const;

/** "valid for 5 h 12 min more" / "expired 20 min ago", updated every 30 seconds. */
export function ValidityCountdown({ validFrom, validTo }: { validFrom: string; validTo: string }) {
  const now = useNow(30_000);
  const { phase, text } = describeValidity(now, validFrom, validTo);
  return (
    <span className={`font-semibold ${phaseClass[phase]}`} data-testid="validity-countdown">
      {text.charAt(0).toUpperCase() + text.slice(1)}
    </span>
  );
}
