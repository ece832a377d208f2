import type { ButtonHTMLAttributes } from 'react';

type Variant = 'primary' | 'secondary' | 'danger' | 'ghost';
const styles: Record<Variant, string> = {
  primary: 'bg-ink-700 text-white hover:bg-ink-800 border-ink-700',
  secondary: 'bg-white text-ink-900 hover:bg-ink-50 border-line',
  danger: 'bg-error text-white hover:brightness-95 border-error',
  ghost: 'bg-transparent text-ink-700 hover:bg-ink-50 border-transparent',
};

export interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  variant?: Variant;
  size?: 'sm' | 'md';
  /** Shows a busy state and blocks double submission. */
  busy?: boolean;
}

export function Button({ variant = 'secondary', size = 'md', busy, disabled, className = '', children, type = 'button', ...rest }: ButtonProps) {
  const pad = size === 'sm' ? 'px-2 py-0.5 text-xs' : 'px-3 py-1.5 text-sm';
  return (
    <button
      type={type}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      className={`inline-flex items-center gap-1.5 rounded border font-medium transition-colors disabled:cursor-not-allowed disabled:opacity-50 ${pad} ${styles[variant]} ${className}`}
      {...rest}
    >
      {busy && <span aria-hidden className="inline-block h-3 w-3 animate-spin rounded-full border-2 border-current border-r-transparent" />}
      {children}
    </button>
  );
}
