import { forwardRef, useId, type InputHTMLAttributes, type ReactNode, type SelectHTMLAttributes, type TextareaHTMLAttributes } from 'react';

interface FieldShellProps {
  label: string;
  error?: string;
  hint?: ReactNode;
  children: (ids: { id: string; describedBy?: string }) => ReactNode;
}

/** Label, control, hint and field-level error, wired for screen readers. */
export function FieldShell({ label, error, hint, children }: FieldShellProps) {
  const id = useId();
  const hintId = hint ? `${id}-hint` : undefined;
  const errorId = error ? `${id}-error` : undefined;
  const describedBy = [hintId, errorId].filter(Boolean).join(' ') || undefined;
  return (
    <div className="flex flex-col gap-1">
      <label htmlFor={id} className="text-sm font-semibold text-ink">
        {label}
      </label>
      {children({ id, describedBy })}
      {hint ? (
        <p id={hintId} className="text-xs text-ink-soft">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={errorId} role="alert" className="text-sm font-medium text-danger">
          {error}
        </p>
      ) : null}
    </div>
  );
}

const control = 'min-h-11 w-full rounded-md border border-line bg-surface px-3 text-base text-ink aria-[invalid=true]:border-danger';

type InputProps = InputHTMLAttributes<HTMLInputElement> & { label: string; error?: string; hint?: ReactNode };
export const TextField = forwardRef<HTMLInputElement, InputProps>(function TextField({ label, error, hint, className = '', ...props }, ref) {
  return (
    <FieldShell label={label} error={error} hint={hint}>
      {({ id, describedBy }) => <input ref={ref} id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={`${control} ${className}`} {...props} />}
    </FieldShell>
  );
});

type SelectProps = SelectHTMLAttributes<HTMLSelectElement> & { label: string; error?: string; hint?: ReactNode };
export const SelectField = forwardRef<HTMLSelectElement, SelectProps>(function SelectField({ label, error, hint, className = '', children, ...props }, ref) {
  return (
    <FieldShell label={label} error={error} hint={hint}>
      {({ id, describedBy }) => (
        <select ref={ref} id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={`${control} ${className}`} {...props}>
          {children}
        </select>
      )}
    </FieldShell>
  );
});

type AreaProps = TextareaHTMLAttributes<HTMLTextAreaElement> & { label: string; error?: string; hint?: ReactNode };
export const TextAreaField = forwardRef<HTMLTextAreaElement, AreaProps>(function TextAreaField({ label, error, hint, className = '', ...props }, ref) {
  return (
    <FieldShell label={label} error={error} hint={hint}>
      {({ id, describedBy }) => <textarea ref={ref} id={id} aria-invalid={error ? true : undefined} aria-describedby={describedBy} className={`${control} min-h-24 py-2 ${className}`} {...props} />}
    </FieldShell>
  );
});

/** The `<option>`s of a select over a fixed list, each shown by its label in words; `blank` adds a first empty choice. */
export function LabelledOptions<T extends string>({ values, labels, blank }: { values: readonly T[]; labels: Record<T, string>; blank?: string }) {
  return (
    <>
      {blank !== undefined ? <option value="">{blank}</option> : null}
      {values.map((v) => (
        <option key={v} value={v}>
          {labels[v]}
        </option>
      ))}
    </>
  );
}
