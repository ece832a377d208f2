import type { ReactNode } from 'react';
import type { Verdict } from '@/lib/analysis';

type Tone = 'neutral' | 'good' | 'warn' | 'bad' | 'info' | 'valid' | 'questionable' | 'not-valid';
const tones: Record<Tone, string> = {
  neutral: 'bg-ink-50 text-ink-800 border-ink-100',
  good: 'bg-valid-bg text-valid border-valid/30',
  warn: 'bg-caution-bg text-caution border-caution/30',
  bad: 'bg-error-bg text-error border-error/30',
  info: 'bg-sand-100 text-ink-900 border-sand-300',
  // Verdicts have their own tones, apart from the system-fault ones above.
  valid: 'bg-valid-bg text-valid border-valid/30',
  questionable: 'bg-questionable-bg text-questionable border-questionable/30',
  'not-valid': 'bg-notvalid-bg text-notvalid border-notvalid/30',
};

export function Badge({ tone = 'neutral', children, title }: { tone?: Tone; children: ReactNode; title?: string }) {
  return (
    <span title={title} className={`inline-flex items-center gap-1 whitespace-nowrap rounded border px-1.5 py-px text-xs font-medium ${tones[tone]}`}>
      {children}
    </span>
  );
}

export const VERDICT_TEXT: Record<Verdict, string> = { valid: 'Valid', questionable: 'Questionable', 'not-valid': 'Not valid' };
// A shape per verdict so colour is never the only cue (the trend chart draws the same shapes).
export const VERDICT_GLYPH: Record<Verdict, string> = { valid: '●', questionable: '◇', 'not-valid': '×' };

export function VerdictBadge({ verdict }: { verdict: Verdict }) {
  return (
    <Badge tone={verdict}>
      <span aria-hidden data-shape={verdict}>
        {VERDICT_GLYPH[verdict]}
      </span>
      {VERDICT_TEXT[verdict]}
    </Badge>
  );
}

/**
 * Destination health in the API's own words (overview and deliveries use the same states), and
 * the other status words used by deliveries, inbound messages, monitors and users.
 */
export const DESTINATION_STATE_TEXT: Record<string, string> = {
  up: 'up',
  paused: 'paused',
  'circuit-open': 'circuit open',
  down: 'down',
  misconfigured: 'misconfigured',
};
const statusTone: Record<string, Tone> = {
  delivered: 'good',
  accepted: 'good',
  reprocessed: 'good',
  enabled: 'good',
  active: 'good',
  running: 'good',
  up: 'good',
  pending: 'info',
  'waiting-context': 'info',
  duplicate: 'neutral',
  paused: 'warn',
  quarantined: 'warn',
  failed: 'bad',
  rejected: 'bad',
  discarded: 'neutral',
  disabled: 'neutral',
  locked: 'bad',
  down: 'bad',
  'entered-in-error': 'bad',
  'circuit-open': 'bad',
  misconfigured: 'bad',
  withheld: 'neutral',
  sending: 'good',
  stale: 'warn',
  'no-patient': 'info',
  quarantining: 'warn',
  'no-monitor': 'neutral',
};

export function StatusBadge({ status }: { status: string }) {
  return <Badge tone={statusTone[status] ?? 'neutral'}>{status.replace(/-/g, ' ')}</Badge>;
}
