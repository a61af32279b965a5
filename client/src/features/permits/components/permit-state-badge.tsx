import { permitStateLabels, permitStateTone, type PermitState, type SafetyTone } from '@shared/permit/states';

// Safety colour meanings (ISO 3864 / ANSI Z535): red danger, yellow caution (dark text on it), green safe, blue information, grey finished.
const toneClasses: Record<SafetyTone, string> = {
  danger: 'bg-danger text-white border-danger',
  caution: 'bg-caution text-ink border-caution',
  safe: 'bg-safe text-white border-safe',
  info: 'bg-info text-white border-info',
  neutral: 'bg-line text-ink border-ink-soft/40',
};

/** The permit's state in words, on its safety colour; the words carry the meaning, the colour repeats it. */
export function PermitStateBadge({ state, className = '' }: { state: PermitState; className?: string }) {
  const tone = permitStateTone[state];
  return (
    <span
      data-testid="permit-state"
      data-state={state}
      data-tone={tone}
      className={`inline-flex items-center rounded-full border px-2.5 py-0.5 text-sm font-semibold whitespace-nowrap ${toneClasses[tone]} ${className}`}
    >
      {permitStateLabels[state]}
    </span>
  );
}
