import { Link } from 'react-router-dom';
import type { BedTile as Tile } from '@ebbgate/shared';
import { StatusBadge, VerdictBadge } from '@/components/ui/badge';
import { PatientLabel } from '@/components/ui/patient';
import { VerdictValue } from '@/components/analysis/verdict-mark';
import { formatDateTime, humanize } from '@/lib/format';
import { MiniTrend } from './mini-trend';

export function formatAge(seconds: number): string {
  if (seconds < 90) return `${Math.round(seconds)} s ago`;
  if (seconds < 90 * 60) return `${Math.round(seconds / 60)} min ago`;
  if (seconds < 48 * 3600) return `${Math.round(seconds / 3600)} h ago`;
  return `${Math.round(seconds / 86400)} d ago`;
}

/** One bed: who, which monitor, the latest values with their verdict, the main flag, the last hour. */
export function BedTile({ tile }: { tile: Tile }) {
  const a = tile.latest;
  const headingId = `bed-${tile.bedId}`;
  return (
    <article
      aria-labelledby={headingId}
      data-bed={tile.bedName}
      data-bed-id={tile.bedId}
      data-state={tile.state}
      className="flex flex-col gap-1.5 rounded-md border border-line bg-white p-2.5 text-sm"
    >
      <header className="flex items-start justify-between gap-2">
        <div className="min-w-0">
          <h2 id={headingId} className="font-semibold text-ink-950">
            <Link to={`/board/beds/${encodeURIComponent(tile.bedId)}`} className="underline-offset-2 hover:underline">
              {tile.bedName}
            </Link>
            {/* A real space: inline elements alone run together in the accessible name ("ICU-01Intensive care"). */}{' '}
            <span className="text-xs font-normal text-muted">{tile.unit}</span>
          </h2>
          <p className="truncate text-xs text-ink-800" data-testid="patient">
            {tile.patientRef || tile.patientName ? (
              <PatientLabel name={tile.patientName} mrn={tile.patientMrn} patientRef={tile.patientRef} />
            ) : (
              'Patient not named yet'
            )}
          </p>
        </div>
        <span title={tile.stateReason}>
          <StatusBadge status={tile.state} />
        </span>
      </header>
      <p className="text-xs text-muted">{tile.stateReason}</p>
      {a ? (
        <>
          <div className="flex items-center gap-3">
            <VerdictBadge verdict={a.verdict} />
            <span className="text-xs text-muted" title={formatDateTime(a.windowEnd)}>
              window {formatAge(a.ageSeconds)}
            </span>
          </div>
          <dl className="grid grid-cols-3 gap-1">
            {(
              [
                ['PPV', a.ppv, '%'],
                ['SPV', a.spv, 'mmHg'],
                ['ΔPOP', a.deltaPop, '%'],
              ] as const
            ).map(([k, v, unit]) => (
              <div key={k}>
                <dt className="text-xs text-muted">{k}</dt>
                <dd className="text-base font-semibold">
                  <VerdictValue value={v} verdict={a.verdict} unit={unit} />
                </dd>
              </div>
            ))}
          </dl>
          <p className="text-xs" data-testid="main-flag">
            {a.mainFlag ? (
              <>
                <span className="font-medium">{humanize(a.mainFlag.code)}</span>
                {a.mainFlag.reason && <span className="text-muted"> — {a.mainFlag.reason}</span>}
                {a.flagCount > 1 && <span className="text-muted"> (+{a.flagCount - 1} more)</span>}
              </>
            ) : (
              <span className="text-muted">No quality flags.</span>
            )}
          </p>
          <MiniTrend
            points={tile.trend}
            label={`${tile.bedName}: PPV over the last hour, ${tile.trend.filter((p) => p.ppv !== null).length} five-minute means`}
          />
          <p className="flex justify-between text-xs">
            <Link className="text-ink-700 underline" to={`/assessments/${encodeURIComponent(a.assessmentId)}`}>
              Latest assessment
            </Link>
            <Link className="text-ink-700 underline" to={`/board/beds/${encodeURIComponent(tile.bedId)}`} aria-label={`Trend of ${tile.bedName}`}>
              Trend
            </Link>
          </p>
        </>
      ) : (
        <p className="text-xs text-muted">No assessment from this bed yet.</p>
      )}
      <p className="text-xs text-muted">
        Monitor {tile.monitor ? <span className="font-mono">{tile.monitor.identifier}</span> : 'none assigned'}
        {tile.monitor?.lastSeenAt && ` · last data ${formatDateTime(tile.monitor.lastSeenAt)}`}
      </p>
    </article>
  );
}
