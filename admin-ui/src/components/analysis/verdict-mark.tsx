import type { Verdict } from '@/lib/analysis';
import { formatNumber } from '@/lib/format';
import { VERDICT_GLYPH, VERDICT_TEXT } from '@/components/ui/badge';

/** Stroke and fill per verdict; the trend chart draws the same shapes on canvas. */
export const VERDICT_COLOR: Record<Verdict, string> = { valid: '#2f6f4a', questionable: '#5a4a86', 'not-valid': '#5f676b' };

/** The verdict's shape as SVG: valid a filled circle, questionable an open diamond, not valid a cross. */
export function VerdictShape({ verdict, size = 10 }: { verdict: Verdict; size?: number }) {
  const c = VERDICT_COLOR[verdict];
  const h = size / 2;
  return (
    <svg aria-hidden width={size} height={size} viewBox={`0 0 ${size} ${size}`} className="inline-block shrink-0" data-shape={verdict}>
      {verdict === 'valid' && <circle cx={h} cy={h} r={h - 1} fill={c} />}
      {verdict === 'questionable' && <path d={`M${h} 1 L${size - 1} ${h} L${h} ${size - 1} L1 ${h} Z`} fill="white" stroke={c} strokeWidth="1.6" />}
      {verdict === 'not-valid' && <path d={`M2 2 L${size - 2} ${size - 2} M${size - 2} 2 L2 ${size - 2}`} stroke={c} strokeWidth="1.6" strokeLinecap="round" />}
    </svg>
  );
}

/** An index value as a reader should take it: struck through and muted when not valid, with the verdict in words for screen readers. */
export function VerdictValue({ value, verdict, unit = '%', digits = 1 }: { value: number | null; verdict: Verdict; unit?: string; digits?: number }) {
  if (value === null) return <span className="text-muted">—</span>;
  const notValid = verdict === 'not-valid';
  return (
    <span
      className={`num ${notValid ? 'text-notvalid line-through decoration-notvalid/70' : ''}`}
      title={notValid ? 'Not valid: do not act on this value; see the flags' : undefined}
    >
      {formatNumber(value, digits)}
      {unit && <span className="text-xs text-muted"> {unit}</span>}
      {notValid && <span className="sr-only"> (not valid)</span>}
    </span>
  );
}

export function VerdictLegend() {
  return (
    <ul className="flex flex-wrap gap-3 text-xs text-muted" aria-label="Verdict marks">
      {(['valid', 'questionable', 'not-valid'] as const).map((v) => (
        <li key={v} className="inline-flex items-center gap-1">
          <VerdictShape verdict={v} />
          {VERDICT_TEXT[v]}
          {v === 'not-valid' && ' (value struck through)'}
        </li>
      ))}
    </ul>
  );
}

export { VERDICT_GLYPH };
