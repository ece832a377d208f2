import type { ReactNode } from 'react';
import type { Verdict } from '@/lib/analysis';

type Tone = 'neutral' | 'good' | 'warn' | 'bad' | 'info';
const tones: Record<Tone, string> = {
  neutral: 'bg-ink-50 text-ink-800 border-ink-100',
  good: 'bg-valid-bg text-valid border-valid/30',
  warn: 'bg-questionable-bg text-questionable border-questionable/30',
  bad: 'bg-notvalid-bg text-notvalid border-notvalid/30',
  info: 'bg-sand-100 text-ink-900 border-sand-300',
};

export function Badge({ tone = 'neutral', children, title }: { tone?: Tone; children: ReactNode; title?: string }) {
  return (
    <span title={title} className={`inline-flex items-center gap-1 whitespace-nowrap rounded border px-1.5 py-px text-xs font-medium ${tones[tone]}`}>
      {children}
    </span>
  );
}

const verdictText: Record<Verdict, string> = { valid: 'Valid', questionable: 'Questionable', 'not-valid': 'Not valid' };
const verdictTone: Record<Verdict, Tone> = { valid: 'good', questionable: 'warn', 'not-valid': 'bad' };
// A shape per verdict so colour is never the only cue.
const verdictGlyph: Record<Verdict, string> = { valid: '●', questionable: '◆', 'not-valid': '✕' };

export function VerdictBadge({ verdict }: { verdict: Verdict }) {
  return (
    <Badge tone={verdictTone[verdict]}>
      <span aria-hidden>{verdictGlyph[verdict]}</span>
      {verdictText[verdict]}
    </Badge>
  );
}

/** Status words used by deliveries, inbound messages, monitors and users. */
const statusTone: Record<string, Tone> = {
  delivered: 'good', accepted: 'good', reprocessed: 'good', enabled: 'good', active: 'good', running: 'good', healthy: 'good', up: 'good',
  pending: 'info', 'waiting-context': 'info', duplicate: 'neutral', paused: 'warn', quarantined: 'warn', degraded: 'warn',
  failed: 'bad', rejected: 'bad', discarded: 'neutral', disabled: 'neutral', locked: 'bad', down: 'bad', 'entered-in-error': 'bad', 'circuit-open': 'bad', misconfigured: 'bad', withheld: 'neutral',
};

export function StatusBadge({ status }: { status: string }) {
  return <Badge tone={statusTone[status] ?? 'neutral'}>{status.replace(/-/g, ' ')}</Badge>;
}
