import type { ReactNode } from 'react';

/** A label/value list that wraps long words instead of widening the page. */
export function DetailList({ children }: { children: ReactNode }) {
  return <dl className="grid grid-cols-1 gap-x-4 gap-y-1 text-sm sm:grid-cols-[11rem_minmax(0,1fr)]">{children}</dl>;
}

export function Detail({ label, children }: { label: string; children: ReactNode }) {
  const empty = children === null || children === undefined || children === '';
  return (
    <>
      <dt className="font-semibold text-ink-soft">{label}</dt>
      <dd className="mb-1 min-w-0 break-words whitespace-pre-line sm:mb-0">{empty ? '—' : children}</dd>
    </>
  );
}
