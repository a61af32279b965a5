import type { ReactNode } from 'react';

type Tone = 'danger' | 'caution' | 'safe' | 'info';

const tones: Record<Tone, string> = {
  danger: 'border-danger bg-danger-soft',
  caution: 'border-caution bg-caution-soft',
  safe: 'border-safe bg-safe-soft',
  info: 'border-info bg-info-soft',
};

export function Notice({ tone = 'info', title, children, role }: { tone?: Tone; title?: string; children: ReactNode; role?: 'alert' | 'status' }) {
  return (
    <div role={role} className={`rounded-card border-l-4 px-4 py-3 text-ink ${tones[tone]}`}>
      {title ? <p className="font-semibold">{title}</p> : null}
      <div className="text-sm">{children}</div>
    </div>
  );
}

/** The caution every screen that guides dangerous work carries. */
export function SafetyCaution({ children }: { children?: ReactNode }) {
  return (
    <Notice tone="caution" title="Caution">
      {children ?? null}
      Holdpoint records and checks the permit and isolation process. It does not replace the operator&apos;s procedures, local codes, or a competent person&apos;s
      judgement.
    </Notice>
  );
}
