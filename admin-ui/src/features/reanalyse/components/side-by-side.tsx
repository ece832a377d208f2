import { Link } from 'react-router-dom';
import type { AssessmentSummary } from '@ebbgate/shared';
import { VerdictBadge } from '@/components/ui/badge';
import { VerdictValue } from '@/components/analysis/verdict-mark';
import { formatDateTime } from '@/lib/format';

export interface WindowPair {
  key: string;
  monitorId: string;
  windowStart: string;
  before: AssessmentSummary | null;
  after: AssessmentSummary | null;
}

/** Groups assessments by window: the newest run of an older engine "before", the run of `engineVersion` "after". */
export function pairWindows(items: AssessmentSummary[], engineVersion: string): WindowPair[] {
  const groups = new Map<string, WindowPair>();
  for (const a of items) {
    const key = `${a.monitorId}|${a.windowStart}`;
    const g = groups.get(key) ?? { key, monitorId: a.monitorId, windowStart: a.windowStart, before: null, after: null };
    if (a.engineVersion === engineVersion) g.after = a;
    else if (!g.before || a.createdAt > g.before.createdAt) g.before = a;
    groups.set(key, g);
  }
  return [...groups.values()].filter((g) => g.before).sort((x, y) => x.windowStart.localeCompare(y.windowStart));
}

function Result({ a }: { a: AssessmentSummary | null }) {
  if (!a)
    return (
      <td colSpan={4} className="px-2 py-1 text-xs text-muted">
        waiting for the engine…
      </td>
    );
  return (
    <>
      <td className="px-2 py-1">
        <Link
          to={`/assessments/${encodeURIComponent(a.id)}`}
          className="inline-flex items-center gap-1"
          aria-label={`Assessment by engine ${a.engineVersion}: ${a.verdict}`}
        >
          <VerdictBadge verdict={a.verdict} />
        </Link>{' '}
        <span className="text-xs text-muted">{a.engineVersion}</span>
      </td>
      <td className="px-2 py-1 text-right">
        <VerdictValue value={a.ppv} verdict={a.verdict} unit="" />
      </td>
      <td className="px-2 py-1 text-right">
        <VerdictValue value={a.spv} verdict={a.verdict} unit="" />
      </td>
      <td className="px-2 py-1 text-right">
        <VerdictValue value={a.deltaPop} verdict={a.verdict} unit="" />
      </td>
    </>
  );
}

/** Earlier and new result of each window next to each other; a change of verdict is said in words. */
export function SideBySide({ pairs }: { pairs: WindowPair[] }) {
  return (
    <div className="overflow-auto rounded border border-line" role="region" aria-label="Results side by side" tabIndex={0}>
      <table className="w-full text-sm">
        <caption className="sr-only">Each window with its earlier result and the result of the running engine</caption>
        <thead className="bg-paper text-left text-xs text-muted">
          <tr>
            <th rowSpan={2} scope="col" className="px-2 py-1">
              Window
            </th>
            <th colSpan={4} scope="colgroup" className="px-2 py-1">
              Earlier result
            </th>
            <th colSpan={4} scope="colgroup" className="border-l border-line px-2 py-1">
              New result
            </th>
            <th rowSpan={2} scope="col" className="px-2 py-1">
              Change
            </th>
          </tr>
          <tr>
            {[0, 1].flatMap((k) =>
              ['Verdict', 'PPV %', 'SPV mmHg', 'ΔPOP %'].map((h, i) => (
                <th key={`${k}${h}`} scope="col" className={`px-2 py-1 ${i ? 'text-right' : ''} ${k && !i ? 'border-l border-line' : ''}`}>
                  {h}
                </th>
              )),
            )}
          </tr>
        </thead>
        <tbody>
          {pairs.map((p) => (
            <tr key={p.key} className="border-t border-line/70" data-window={p.windowStart}>
              <td className="px-2 py-1 whitespace-nowrap">{formatDateTime(p.windowStart)}</td>
              <Result a={p.before} />
              <Result a={p.after} />
              <td className="px-2 py-1 text-xs">
                {!p.after ? '—' : p.before && p.before.verdict !== p.after.verdict ? `verdict ${p.before.verdict} → ${p.after.verdict}` : 'same verdict'}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
