import { useMemo, useState } from 'react';
import { Link } from 'react-router-dom';
import { Button } from '@/components/ui/button';
import type { BedTrend } from '@ebbgate/shared';
import { VERDICT_TEXT } from '@/components/ui/badge';
import { VerdictShape, VerdictValue } from '@/components/analysis/verdict-mark';
import { formatDateTime } from '@/lib/format';
import { TREND_SERIES } from './trend-chart';

const PAGE = 100;

/** The chart's text alternative: the same points, newest first, each linking to its assessment; 100 a page. */
export function TrendTable({ trend }: { trend: BedTrend }) {
  const [page, setPage] = useState(0);
  const all = useMemo(() => [...trend.points].reverse(), [trend.points]);
  const pages = Math.max(1, Math.ceil(all.length / PAGE));
  const current = Math.min(page, pages - 1);
  const rows = all.slice(current * PAGE, (current + 1) * PAGE);
  return (
    <>
      <div className="max-h-[28rem] overflow-auto rounded border border-line" tabIndex={0} role="region" aria-label="Trend values as a table">
        <table className="w-full text-sm">
          <caption className="sr-only">{`${trend.bed.name}: ${trend.points.length} points from ${formatDateTime(trend.from)} to ${formatDateTime(trend.to)}${trend.downsampled ? `, minimum and maximum per ${trend.bucketSeconds} s` : ''}`}</caption>
          <thead className="sticky top-0 bg-paper text-left text-xs text-muted">
            <tr>
              <th scope="col" className="px-2 py-1">
                Window end
              </th>
              <th scope="col" className="px-2 py-1">
                Verdict
              </th>
              {TREND_SERIES.map((s) => (
                <th key={s.key} scope="col" className="px-2 py-1 text-right">
                  {s.label} ({s.unit})
                </th>
              ))}
              {trend.downsampled && (
                <th scope="col" className="px-2 py-1 text-right">
                  Windows
                </th>
              )}
            </tr>
          </thead>
          <tbody>
            {rows.map((p, i) => (
              <tr key={`${p.assessmentId}-${i}`} className="border-t border-line/70">
                <td className="px-2 py-0.5">
                  <Link className="text-ink-700 underline" to={`/assessments/${encodeURIComponent(p.assessmentId)}`}>
                    {formatDateTime(p.t)}
                  </Link>
                </td>
                <td className="px-2 py-0.5">
                  <span className="inline-flex items-center gap-1">
                    <VerdictShape verdict={p.verdict} />
                    {VERDICT_TEXT[p.verdict]}
                  </span>
                </td>
                {TREND_SERIES.map((s) => (
                  <td key={s.key} className="px-2 py-0.5 text-right">
                    {/* Heart and respiratory rate are measurements: they are not struck through with the dynamic indices. */}
                    <VerdictValue value={p[s.key]} verdict={s.scale === 'rate' ? 'valid' : p.verdict} unit="" digits={s.scale === 'rate' ? 0 : 1} />
                  </td>
                ))}
                {trend.downsampled && <td className="px-2 py-0.5 text-right num">{p.windows}</td>}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      {pages > 1 && (
        <nav aria-label="Table pages" className="mt-1 flex items-center gap-2 text-xs">
          <Button size="sm" disabled={current === 0} onClick={() => setPage(current - 1)}>
            Newer
          </Button>
          <span>
            Rows {current * PAGE + 1}–{Math.min(all.length, (current + 1) * PAGE)} of {all.length}
          </span>
          <Button size="sm" disabled={current >= pages - 1} onClick={() => setPage(current + 1)}>
            Older
          </Button>
        </nav>
      )}
    </>
  );
}
