import type { FlushTestResult, RespiratoryMechanics, TidalVolumeChallengeResult } from '@/lib/analysis';
import { formatNumber, humanize } from '@/lib/format';
import { DefinitionList } from '@/components/ui/page';
import { VerdictBadge } from '@/components/ui/badge';

const CHALLENGE_TEXT: Record<TidalVolumeChallengeResult['verdict'], string> = {
  positive: 'PPV rose by the threshold or more',
  negative: 'PPV rose less than the threshold',
  'cannot-be-judged': 'Cannot be judged',
};

/**
 * A tidal volume challenge as the engine judged it: both PPVs, the rise, the threshold with its
 * source, and the verdict or why there is none. The cautions travel with it.
 */
export function ChallengePanel({ challenge }: { challenge: TidalVolumeChallengeResult }) {
  const c = challenge;
  const vt = (ml: number | null, perKg: number | null) =>
    ml === null ? '—' : `${formatNumber(ml, 0)} mL${perKg === null ? '' : ` (${formatNumber(perKg)} mL/kg PBW)`}`;
  return (
    <section aria-label="Tidal volume challenge" className="flex flex-col gap-2 text-sm" data-challenge={c.verdict}>
      <p className="flex flex-wrap items-center gap-2">
        <span className="rounded border border-line bg-paper px-1.5 py-px text-xs font-semibold" data-testid="challenge-verdict">
          {CHALLENGE_TEXT[c.verdict]}
        </span>
        {c.deltaPpv !== null && (
          <span>
            ΔPPV{' '}
            <strong className="num">
              {c.deltaPpv > 0 ? '+' : ''}
              {formatNumber(c.deltaPpv)}
            </strong>{' '}
            points
          </span>
        )}
      </p>
      <DefinitionList
        items={[
          [
            'Baseline PPV',
            <span key="b">
              {c.baselinePpv === null ? '—' : `${formatNumber(c.baselinePpv)} %`} {c.baselineVerdict && <VerdictBadge verdict={c.baselineVerdict} />}{' '}
              <span className="text-xs text-muted">at {vt(c.baselineTidalVolumeMl, c.baselineMlPerKg)}</span>
            </span>,
          ],
          [
            'Challenge PPV',
            <span key="c">
              {c.challengePpv === null ? '—' : `${formatNumber(c.challengePpv)} %`} {c.challengeVerdict && <VerdictBadge verdict={c.challengeVerdict} />}{' '}
              <span className="text-xs text-muted">
                at {vt(c.challengeTidalVolumeMl, c.challengeMlPerKg)}
                {c.challengeHeldSeconds !== null ? `, held ${formatNumber(c.challengeHeldSeconds, 0)} s` : ''}
              </span>
            </span>,
          ],
          [
            'Threshold',
            <span key="t">
              {formatNumber(c.threshold)} points <span className="text-xs text-muted">({c.thresholdSource})</span>
            </span>,
          ],
          ...(c.baselinePressureSwingCmH2O !== null || c.challengePressureSwingCmH2O !== null
            ? [
                ['Airway pressure swing', `${formatNumber(c.baselinePressureSwingCmH2O)} → ${formatNumber(c.challengePressureSwingCmH2O)} cmH₂O`] as [
                  string,
                  string,
                ],
              ]
            : []),
        ]}
      />
      {c.reasonTexts.length > 0 && (
        <div>
          <h4 className="text-xs font-semibold uppercase tracking-wide text-muted">Why it cannot be judged</h4>
          <ul className="list-disc pl-5" aria-label="Reasons the challenge cannot be judged">
            {c.reasonTexts.map((r, i) => (
              <li key={i}>{r}</li>
            ))}
          </ul>
        </div>
      )}
      {c.cautions.length > 0 && (
        <ul className="text-xs text-muted">
          {c.cautions.map((t, i) => (
            <li key={i}>{t}</li>
          ))}
        </ul>
      )}
    </section>
  );
}

/** One flush test: natural frequency, damping ratio and the Gardner chart region in words. */
export function FlushTestSummary({ test }: { test: Pick<FlushTestResult, 'naturalFrequencyHz' | 'dampingRatio' | 'region' | 'regionText' | 'oscillations'> }) {
  return (
    <DefinitionList
      items={[
        ['Natural frequency', test.naturalFrequencyHz === null ? 'not measurable' : `${formatNumber(test.naturalFrequencyHz)} Hz`],
        ['Damping ratio ζ', test.dampingRatio === null ? 'not measurable' : formatNumber(test.dampingRatio, 2)],
        [
          'Gardner chart',
          <span key="g">
            <strong>{humanize(test.region)}</strong> — {test.regionText}
          </span>,
        ],
        ['Oscillations measured', String(test.oscillations)],
      ]}
    />
  );
}

export function LineChecks({ flushTests, dampingEstimate }: { flushTests: FlushTestResult[]; dampingEstimate: string | null }) {
  return (
    <div className="flex flex-col gap-2 text-sm" aria-label="Arterial line checks">
      {flushTests.length === 0 ? (
        <p className="text-muted">No flush test in this window.</p>
      ) : (
        flushTests.map((t, i) => (
          <div key={i}>
            <h4 className="text-xs font-semibold text-ink-800">Flush test at {formatNumber(t.releaseTime)} s</h4>
            <FlushTestSummary test={t} />
          </div>
        ))
      )}
      {dampingEstimate && (
        <p className="text-xs text-muted">Damping from beat shape: {humanize(dampingEstimate)} (Gardner, Anesthesiology 1981 for the chart).</p>
      )}
    </div>
  );
}

/** Compliance and driving pressure, with where the plateau came from. */
export function MechanicsPanel({ mechanics }: { mechanics: RespiratoryMechanics | null }) {
  if (!mechanics) return <p className="text-sm text-muted">No airway pressure and tidal volume to compute compliance and driving pressure.</p>;
  const m = mechanics;
  return (
    <DefinitionList
      items={[
        [
          'Compliance',
          m.complianceMlPerCmH2O === null ? (
            '—'
          ) : (
            <span key="c">
              {formatNumber(m.complianceMlPerCmH2O)} mL/cmH₂O{' '}
              <span className="text-xs text-muted">{m.complianceSource === 'context' ? '(as given with the batch)' : '(Vt / (plateau − PEEP))'}</span>
            </span>
          ),
        ],
        [
          'Driving pressure',
          m.drivingPressureCmH2O === null ? (
            '—'
          ) : (
            <span key="d">
              {formatNumber(m.drivingPressureCmH2O)} cmH₂O <span className="text-xs text-muted">(plateau − PEEP)</span>
            </span>
          ),
        ],
        [
          'Plateau',
          m.plateauCmH2O === null ? (
            '—'
          ) : (
            <span key="p">
              {formatNumber(m.plateauCmH2O)} cmH₂O{' '}
              {m.plateauSource === 'estimated-from-peak' && (
                <span className="text-xs text-caution">estimated from the peak (no end-inspiratory pause): compliance likely under-read</span>
              )}
            </span>
          ),
        ],
        ['PEEP / peak', `${formatNumber(m.peepCmH2O)} / ${formatNumber(m.peakCmH2O)} cmH₂O`],
      ]}
    />
  );
}
