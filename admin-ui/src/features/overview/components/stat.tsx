import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';

/** A number that links to the list behind it (plain text where the user may not open that list). */
export function Stat({
  label,
  value,
  to,
  tone,
  hint,
}: {
  label: string;
  value: ReactNode;
  to?: string;
  tone?: 'good' | 'warn' | 'bad' | 'questionable' | 'not-valid';
  hint?: string;
}) {
  const color =
    tone === 'bad'
      ? 'text-error'
      : tone === 'warn'
        ? 'text-caution'
        : tone === 'good'
          ? 'text-valid'
          : tone === 'questionable'
            ? 'text-questionable'
            : tone === 'not-valid'
              ? 'text-notvalid'
              : 'text-ink-950';
  const body = (
    <>
      <span className={`num block text-2xl font-semibold leading-tight ${color}`}>{value}</span>
      <span className="block text-xs text-muted">{label}</span>
    </>
  );
  return to ? (
    <Link to={to} className="block rounded px-1 hover:bg-ink-50" title={hint ?? `Open the list: ${label}`}>
      {body}
    </Link>
  ) : (
    <div className="px-1" title={hint}>
      {body}
    </div>
  );
}
