import type { ParseReport } from '@/lib/analysis';
import { Badge } from '@/components/ui/badge';

export function ParseReportView({ report }: { report: ParseReport }) {
  return (
    <div className="flex flex-col gap-2 text-sm">
      <p>
        Read as <Badge tone="info">{report.format}</Badge> with {report.channels.length} channel{report.channels.length === 1 ? '' : 's'}.
      </p>
      <table className="w-full text-sm" aria-label="Channels read">
        <thead className="text-left text-xs text-muted">
          <tr>
            <th className="py-0.5 pr-2">Code</th>
            <th className="pr-2">Role</th>
            <th className="pr-2">Unit</th>
            <th className="pr-2 text-right">Rate</th>
            <th className="text-right">Samples</th>
          </tr>
        </thead>
        <tbody>
          {report.channels.map((c) => (
            <tr key={c.code} className="border-t border-line/70">
              <td className="py-0.5 pr-2 font-mono text-xs">{c.code}</td>
              <td className="pr-2">{c.role ?? <span className="text-caution">not mapped</span>}</td>
              <td className="pr-2">{c.unit}</td>
              <td className="num pr-2 text-right">{c.sampleRate} Hz</td>
              <td className="num text-right">{c.samples.toLocaleString('en-GB')}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {report.warnings.length > 0 && (
        <ul className="flex flex-col gap-0.5" aria-label="Parse warnings">
          {report.warnings.map((w) => (
            <li key={w} className="rounded bg-caution-bg px-2 py-0.5 text-xs text-caution">
              {w}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
