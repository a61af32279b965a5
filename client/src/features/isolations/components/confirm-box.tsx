import { useId, type ReactNode } from 'react';

/** The tick that guards an irreversible record: the submit button stays off until it is ticked. */
export function ConfirmBox({ checked, onChange, children }: { checked: boolean; onChange: (v: boolean) => void; children: ReactNode }) {
  const id = useId();
  return (
    <div className="flex items-start gap-3 rounded-md border border-caution bg-caution-soft p-3">
      <input id={id} type="checkbox" className="mt-1 size-6 shrink-0" checked={checked} onChange={(e) => onChange(e.target.checked)} />
      <label htmlFor={id} className="min-h-11 text-sm font-medium">
        {children}
      </label>
    </div>
  );
}
