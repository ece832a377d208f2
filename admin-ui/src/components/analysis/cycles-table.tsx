import type { AnalysisResult } from '@/lib/analysis';
import { formatNumber, humanize } from '@/lib/format';
import { Badge } from '@/components/ui/badge';

/** One row per respiratory cycle: times, beats, per-cycle values and why a cycle was not used. */
export function CyclesTable({ analysis }: { analysis: AnalysisResult }) {
  if (analysis.cycles.length === 0) {
    return <p className="text-sm text-muted">No respiratory cycles found{analysis.respiration.reason ? `: ${analysis.respiration.reason}` : '.'}</p>;
  }
  return (
    <div className="overflow-x-auto rounded border border-line">
      <table className="w-full text-sm" aria-label="Respiratory cycles">
        <thead className="bg-ink-50 text-left text-xs font-semibold text-ink-800">
          <tr>
            <th scope="col" className="px-2 py-1">
              Cycle
            </th>
            <th scope="col" className="px-2 py-1">
              Time (s)
            </th>
            <th scope="col" className="px-2 py-1 text-right">
              Beats ABP / pleth
            </th>
            <th scope="col" className="px-2 py-1 text-right">
              PP max / min
            </th>
            <th scope="col" className="px-2 py-1 text-right">
              PPV %
            </th>
            <th scope="col" className="px-2 py-1 text-right">
              SPV mmHg
            </th>
            <th scope="col" className="px-2 py-1 text-right">
              ΔPOP %
            </th>
            <th scope="col" className="px-2 py-1">
              Use
            </th>
          </tr>
        </thead>
        <tbody>
          {analysis.cycles.map((c) => (
            <tr key={c.n} className={`border-t border-line/70 ${c.usable ? '' : 'bg-error-bg/30'}`}>
              <td className="num px-2 py-0.5">C{c.n}</td>
              <td className="num px-2 py-0.5">
                {formatNumber(c.startTime)}–{formatNumber(c.endTime)}
              </td>
              <td className="num px-2 py-0.5 text-right">
                {c.abpBeatIndices.length} / {c.plethBeatIndices.length}
              </td>
              <td className="num px-2 py-0.5 text-right">
                {formatNumber(c.ppMax)} / {formatNumber(c.ppMin)}
              </td>
              <td className="num px-2 py-0.5 text-right">{formatNumber(c.ppv)}</td>
              <td className="num px-2 py-0.5 text-right">{formatNumber(c.spv)}</td>
              <td className="num px-2 py-0.5 text-right">{formatNumber(c.deltaPop)}</td>
              <td className="px-2 py-0.5">
                {c.usable ? (
                  <Badge tone={c.usedInWindow ? 'good' : 'neutral'}>{c.usedInWindow ? 'averaged' : 'usable'}</Badge>
                ) : (
                  <span className="text-xs text-error">{c.rejectReasons.map(humanize).join(', ')}</span>
                )}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
