import type { AnalysisResult, DecisionBand, IndexName, IndexValue, Verdict } from '@/lib/analysis';
import { displayUnit, formatNumber } from '@/lib/format';
import { VerdictBadge } from '@/components/ui/badge';
import { Cautions } from './cautions';
import { FlagsList } from './flags-list';

const INDEX_LABELS: Record<IndexName, string> = {
  ppv: 'PPV',
  spv: 'SPV',
  deltaPop: 'ΔPOP',
  perfusionIndex: 'Perfusion index',
  heartRate: 'Heart rate',
  respiratoryRate: 'Respiratory rate',
  hrRrRatio: 'HR/RR ratio',
};
const ORDER: IndexName[] = ['ppv', 'spv', 'deltaPop', 'perfusionIndex', 'heartRate', 'respiratoryRate', 'hrRrRatio'];

function bandFor(bands: DecisionBand[], index: IndexName, v: number | null): DecisionBand | undefined {
  if (v === null) return undefined;
  return bands.find((b) => b.index === index && (b.lower === null || v >= b.lower) && (b.upper === null || v < b.upper));
}

function IndexRow({ name, value, verdict, band }: { name: IndexName; value: IndexValue; verdict: Verdict; band?: DecisionBand }) {
  const notValid = verdict === 'not-valid';
  return (
    <tr className="border-t border-line/70" data-index={name}>
      <th scope="row" className="py-1 pr-3 text-left font-medium">
        {INDEX_LABELS[name]}
      </th>
      <td className={`num py-1 pr-3 text-right text-base font-semibold ${notValid ? 'text-notvalid line-through decoration-notvalid/70' : ''}`}>
        {value.value === null ? '—' : `${formatNumber(value.value, name === 'hrRrRatio' ? 2 : 1)}`}
        <span className="ml-1 text-xs font-normal text-muted no-underline">{value.value === null ? '' : displayUnit(value.unit)}</span>
      </td>
      <td className="py-1 pr-3">
        <VerdictBadge verdict={verdict} />
      </td>
      <td className="py-1 text-xs text-muted">
        {value.value === null ? (
          (value.notComputableReason ?? 'not computable')
        ) : (
          <>
            {value.cyclesUsed > 0 && (
              <span>
                {value.cyclesUsed} cycles{value.spread !== null ? `, spread ${formatNumber(value.spread)} ${displayUnit(value.unit)}` : ''}
              </span>
            )}
            {band && (
              <span className="block text-ink-900" title={band.source}>
                Band: {band.label} <span className="text-muted">({band.source})</span>
              </span>
            )}
          </>
        )}
      </td>
    </tr>
  );
}

/** The indices with their verdicts, bands and flags, and the cautions beside them. */
export function IndicesPanel({ analysis }: { analysis: AnalysisResult }) {
  return (
    <div className="grid gap-3 lg:grid-cols-[minmax(0,1.5fr)_minmax(0,1fr)]">
      <div className="flex flex-col gap-3">
        <div className="flex items-center gap-2 text-sm">
          <span className="font-semibold">Window verdict</span>
          <VerdictBadge verdict={analysis.verdict} />
          <span className="text-xs text-muted">
            engine {analysis.engineVersion} · {formatNumber(analysis.durationSeconds, 0)} s window
          </span>
        </div>
        <table className="w-full text-sm" aria-label="Indices">
          <thead className="sr-only">
            <tr>
              <th>Index</th>
              <th>Value</th>
              <th>Verdict</th>
              <th>Detail</th>
            </tr>
          </thead>
          <tbody>
            {ORDER.map((name) => (
              <IndexRow
                key={name}
                name={name}
                value={analysis.indices[name]}
                verdict={analysis.indexVerdicts[name] ?? analysis.verdict}
                band={bandFor(analysis.bands, name, analysis.indices[name].value)}
              />
            ))}
          </tbody>
        </table>
        <FlagsList flags={analysis.flags} />
      </div>
      <Cautions cautions={analysis.cautions} />
    </div>
  );
}
