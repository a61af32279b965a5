import type { ButtonHTMLAttributes } from 'react';

type Variant = 'primary' | 'secondary' | 'danger' | 'ghost';

const styles: Record<Variant, string> = {
  primary: 'bg-brand text-white hover:bg-brand-strong',
  secondary: 'bg-surface text-ink border border-line hover:bg-brand-soft',
  danger: 'bg-danger text-white hover:brightness-90',
  ghost: 'bg-transparent text-ink hover:bg-brand-soft',
};

export function Button({ variant = 'primary', className = '', busy = false, children, disabled, ...props }: ButtonHTMLAttributes<HTMLButtonElement> & { variant?: Variant; busy?: boolean }) {
  return (
    <button
      {...props}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      className={`inline-flex min-h-11 items-center justify-center gap-2 rounded-md px-4 text-base font-semibold disabled:cursor-not-allowed disabled:opacity-60 ${styles[variant]} ${className}`}
    >
      {busy ? <span className="inline-block size-4 animate-spin rounded-full border-2 border-current border-r-transparent" aria-hidden /> : null}
      {children}
    </button>
  );
}
