import { stepKindLabels, type StepKind } from '@shared/schemas/isolation.schema';
import type { StepStatus } from '@shared/types/isolations';

// Safety colour meanings (ISO 3864 / ANSI Z535): yellow caution = on but not yet checked by a second
// person, green = isolation proven, grey = planned or finished. The words carry the meaning; the colour repeats it.
const statusStyle: Record<StepStatus, { label: string; className: string }> = {
  planned: { label: 'Planned', className: 'bg-paper text-ink border-line' },
  applied: { label: 'Applied, not verified', className: 'bg-caution text-ink border-caution' },
  verified: { label: 'Verified', className: 'bg-safe text-white border-safe' },
  removed: { label: 'Removed', className: 'bg-line text-ink border-ink-soft/40' },
};

export function StepStatusBadge({ status }: { status: StepStatus }) {
  const s = statusStyle[status];
  return (
    <span data-testid="step-status" data-status={status} className={`inline-flex items-center rounded-full border px-2.5 py-0.5 text-sm font-semibold whitespace-nowrap ${s.className}`}>
      {s.label}
    </span>
  );
}

export function StepKindTag({ kind }: { kind: StepKind }) {
  return <span className="inline-flex items-center rounded-md border border-line bg-brand-soft px-2 py-0.5 text-sm font-medium text-brand-strong">{stepKindLabels[kind]}</span>;
}
