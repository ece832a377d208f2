import type { Flag } from '@/lib/analysis';
import { humanize } from '@/lib/format';
import { Badge } from '@/components/ui/badge';

const DIRECTION: Record<string, string> = { 'false-high': 'value likely too high', 'false-low': 'value likely too low' };

export function FlagsList({ flags }: { flags: Flag[] }) {
  if (flags.length === 0) return <p className="text-sm text-muted">No quality flags.</p>;
  return (
    <div>
      <h3 className="mb-1 text-xs font-semibold uppercase tracking-wide text-muted">Quality flags</h3>
      <ul className="flex flex-col gap-1" aria-label="Quality flags">
        {flags.map((f, i) => (
          <li key={`${f.code}-${i}`} className="flex items-start gap-2 text-sm" data-flag={f.code}>
            <Badge tone={f.severity === 'critical' ? 'bad' : f.severity === 'warning' ? 'warn' : 'neutral'}>{f.severity}</Badge>
            <span>
              <span className="font-medium">{humanize(f.code)}</span>
              {f.source && <span className="text-muted"> · {f.source}</span>}
              {f.direction && <span className="text-caution"> · {DIRECTION[f.direction]}</span>}
              <span className="block text-xs text-muted">{f.reason}</span>
            </span>
          </li>
        ))}
      </ul>
    </div>
  );
}
