import { useState } from 'react';
import { Link, useNavigate, useParams, useSearchParams } from 'react-router-dom';
import { formatDateTime, formatNumber } from '@/lib/format';
import { PageHeader, Panel } from '@/components/ui/page';
import { ErrorState, LoadingState } from '@/components/ui/states';
import { Cautions } from '@/components/analysis/cautions';
import { VerdictLegend } from '@/components/analysis/verdict-mark';
import type { BedTrend } from '@ebbgate/shared';
import { ChallengePanel } from '@/components/analysis/line-checks';
import { trendCsvUrl, useBedTrend, useChallengeOf } from '../api/board';
import { TREND_SERIES, TrendChart, type SeriesKey } from '../components/trend-chart';
import { TrendTable } from '../components/trend-table';

export const SPANS = [1, 3, 6, 12, 24, 48] as const;

/** The latest judged challenge in the span, as its assessment carries it; raises without a judgement are listed. */
function ChallengesOnTrend({ events }: { events: BedTrend['events'] }) {
  const challenges = events.filter((e) => e.kind === 'tidal-volume-challenge');
  const judged = [...challenges].reverse().find((e) => e.assessmentId);
  const result = useChallengeOf(judged?.assessmentId ?? null);
  if (challenges.length === 0) return null;
  return (
    <div className="mt-3">
      <Panel title="Tidal volume challenges">
        <ul className="mb-2 text-sm" aria-label="Tidal volume challenges in the span">
          {challenges.map((e, i) => (
            <li key={i}>
              <span className="text-xs text-muted">{formatDateTime(e.t)}</span> {e.label}
            </li>
          ))}
        </ul>
        {judged && result.data && <ChallengePanel challenge={result.data} />}
        {!judged && <p className="text-xs text-muted">The engine has not judged these raises; open the windows after each to read PPV.</p>}
      </Panel>
    </div>
  );
}

/** One bed over hours: the indices with their verdicts, the grey zone, what changed and when. */
export function BedTrendRoute() {
  const { bedId = '' } = useParams();
  const [search, setSearch] = useSearchParams();
  const navigate = useNavigate();
  const hours = SPANS.includes(Number(search.get('hours')) as (typeof SPANS)[number]) ? Number(search.get('hours')) : 6;
  const trend = useBedTrend(bedId, hours);
  const [shown, setShown] = useState<Record<SeriesKey, boolean>>({ ppv: true, spv: true, deltaPop: true, heartRate: false, respiratoryRate: false });

  if (trend.isPending) return <LoadingState label="Loading the trend…" />;
  if (trend.error && !trend.data) return <ErrorState error={trend.error} onRetry={() => trend.refetch()} />;
  const t = trend.data!;
  const z = t.greyZone;

  return (
    <>
      <PageHeader
        title={`Trend · ${t.bed.name}`}
        description={`${t.bed.unit} · ${formatDateTime(t.from)} to ${formatDateTime(t.to)} · ${t.windows} windows${t.downsampled ? `, shown as minimum and maximum per ${Math.round(t.bucketSeconds! / 60)} min` : ''}`}
        actions={
          <>
            <Link className="text-sm text-ink-700 underline" to="/board">
              Back to the board
            </Link>
            <a className="rounded border border-line bg-white px-2 py-1 text-sm text-ink-900 hover:bg-ink-50" href={trendCsvUrl(t.bed.id, hours)} download>
              Export CSV
            </a>
          </>
        }
      />
      <div className="mb-2 flex flex-wrap items-end gap-4 rounded-md border border-line bg-white px-3 py-2">
        <fieldset>
          <legend className="text-xs font-medium text-ink-800">Span</legend>
          <div className="flex gap-1">
            {SPANS.map((h) => (
              <label
                key={h}
                className={`cursor-pointer rounded border px-2 py-0.5 text-sm has-[:focus-visible]:outline-2 has-[:focus-visible]:outline-sand-500 ${h === hours ? 'border-ink-700 bg-ink-700 text-white' : 'border-line bg-white text-ink-900'}`}
              >
                <input type="radio" name="span" className="sr-only" checked={h === hours} onChange={() => setSearch({ hours: String(h) }, { replace: true })} />
                {h} h
              </label>
            ))}
          </div>
        </fieldset>
        <fieldset>
          <legend className="text-xs font-medium text-ink-800">Series</legend>
          <div className="flex flex-wrap gap-3">
            {TREND_SERIES.map((s) => (
              <label key={s.key} className="inline-flex items-center gap-1 text-sm">
                <input
                  type="checkbox"
                  className="accent-ink-700"
                  checked={shown[s.key]}
                  onChange={(e) => setShown((v) => ({ ...v, [s.key]: e.target.checked }))}
                />
                <svg aria-hidden width="18" height="6">
                  <line x1="0" x2="18" y1="3" y2="3" stroke={s.color} strokeWidth="2" strokeDasharray={s.dash.join(' ')} />
                </svg>
                {s.label}
              </label>
            ))}
          </div>
        </fieldset>
        <VerdictLegend />
      </div>
      <Panel title="Indices over time">
        {t.points.length === 0 ? (
          <p className="text-sm text-muted">No assessments from this bed in the span.</p>
        ) : (
          <TrendChart trend={t} shown={shown} onOpen={(id) => navigate(`/assessments/${encodeURIComponent(id)}`)} />
        )}
        <p className="mt-1 text-xs text-muted" data-testid="grey-zone">
          {z ? (
            <>
              Shaded band: PPV {formatNumber(z.lower)}–{formatNumber(z.upper)} % — {z.label}. Source: {z.source} (site settings).
            </>
          ) : (
            'No PPV grey zone is set in the site settings.'
          )}
        </p>
      </Panel>
      <div className="mt-3 grid gap-3 xl:grid-cols-[1fr_22rem]">
        <Panel title="Values (the chart as a table)">
          <TrendTable trend={t} />
        </Panel>
        <Panel title="Events">
          {t.events.length === 0 ? (
            <p className="text-sm text-muted">No context changes, transfers, challenges or flush tests in the span.</p>
          ) : (
            <ol className="flex flex-col gap-1 text-sm" aria-label="Events in the span">
              {t.events.map((e, i) => (
                <li key={i} data-event={e.kind}>
                  <span className="text-xs text-muted">{formatDateTime(e.t)}</span>{' '}
                  {e.assessmentId ? (
                    <Link className="text-ink-700 underline" to={`/assessments/${encodeURIComponent(e.assessmentId)}`}>
                      {e.label}
                    </Link>
                  ) : (
                    e.label
                  )}
                </li>
              ))}
            </ol>
          )}
        </Panel>
      </div>
      <ChallengesOnTrend events={t.events} />
      <div className="mt-3">
        <Cautions compact />
      </div>
    </>
  );
}
