import type { AnalysisResult, IndexValue, TidalVolumeChallengeResult } from './types';

const fmt = (v: IndexValue, digits = 1): string =>
  v.value === null
    ? `not computable (${v.notComputableReason ?? 'no value'})`
    : `${v.value.toFixed(digits)} ${v.unit}${v.spread !== null ? ` (spread ${v.spread.toFixed(digits)}, ${v.cyclesUsed} cycles)` : ''}`;

/** Plain-text summary of a result for a terminal (the CLI's --pretty). */
export function formatSummary(r: AnalysisResult): string {
  const out: string[] = [];
  out.push(`Ebbgate analysis engine ${r.engineVersion}  window ${r.durationSeconds.toFixed(1)} s${r.startTime ? ` from ${r.startTime}` : ''}`);
  out.push(`Verdict: ${r.verdict.toUpperCase()}`);
  const iv = Object.entries(r.indexVerdicts);
  if (iv.length) out.push(`  per index: ${iv.map(([k, v]) => `${k} ${v}`).join(', ')}`);
  out.push('Indices:');
  out.push(`  PPV      ${fmt(r.indices.ppv)}`);
  out.push(`  SPV      ${fmt(r.indices.spv)}`);
  out.push(`  ΔPOP     ${fmt(r.indices.deltaPop)}`);
  out.push(`  PI       ${fmt(r.indices.perfusionIndex, 2)}`);
  out.push(`  HR       ${fmt(r.indices.heartRate, 0)}`);
  out.push(`  RR       ${fmt(r.indices.respiratoryRate, 1)}`);
  out.push(`  HR/RR    ${fmt(r.indices.hrRrRatio, 2)}`);
  out.push(`Channels: ${r.channels.map((c) => `${c.role} ${c.sampleRate} Hz ${c.unitFrom}→${c.unitTo}`).join('; ')}`);
  for (const s of [r.beats.abp, r.beats.pleth]) if (s) out.push(`Beats (${s.source}, ${s.method}): ${s.acceptedCount} accepted, ${s.rejectedCount} rejected`);
  const usable = r.cycles.filter((c) => c.usable).length;
  out.push(`Cycles (${r.respiration.source ?? 'none'}): ${r.cycles.length} found, ${usable} usable, ${r.cycles.filter((c) => c.usedInWindow).length} averaged`);
  const m = r.respiratoryMechanics;
  if (m) {
    const c =
      m.complianceMlPerCmH2O !== null
        ? `${m.complianceMlPerCmH2O.toFixed(1)} mL/cmH2O (${m.complianceSource === 'context' ? 'as given' : m.plateauSource === 'end-inspiratory-pause' ? 'plateau from a pause' : 'estimated from the peak, a lower bound'})`
        : 'not computable';
    out.push(
      `Mechanics: compliance ${c}; driving pressure ${m.drivingPressureCmH2O !== null ? `${m.drivingPressureCmH2O.toFixed(1)} cmH2O` : '—'}; PEEP ${m.peepCmH2O?.toFixed(1) ?? '—'}`,
    );
  }
  for (const t of r.arterialLine?.flushTests ?? []) {
    out.push(
      `Flush test at ${t.releaseTime.toFixed(1)} s: fn ${t.naturalFrequencyHz?.toFixed(1) ?? '—'} Hz, damping ratio ${t.dampingRatio?.toFixed(2) ?? '—'}; ${t.regionText}`,
    );
  }
  if (r.flags.length) {
    out.push('Flags:');
    for (const f of r.flags)
      out.push(
        `  [${f.severity}] ${f.code}${f.source ? ` on ${f.source}` : ''}${f.direction ? ` (likely ${f.direction})` : ''}${
          f.directionByIndex
            ? ` [${Object.entries(f.directionByIndex)
                .map(([k, v]) => `${k} ${v}`)
                .join(', ')}]`
            : ''
        }: ${f.reason}`,
      );
  }
  out.push('Bands (context only, never an order to treat):');
  for (const b of r.bands) out.push(`  ${b.index} ${b.lower ?? '−∞'}–${b.upper ?? '∞'} ${b.unit}: ${b.label} [${b.source}]`);
  out.push('Cautions:');
  for (const c of r.cautions) out.push(`  - ${c}`);
  return out.join('\n');
}

/** Plain-text summary of a tidal volume challenge (the CLI's --pretty). */
export function formatChallengeSummary(t: TidalVolumeChallengeResult): string {
  const n = (v: number | null, d = 1, unit = ''): string => (v === null ? '—' : `${v.toFixed(d)}${unit}`);
  const out = [
    `Tidal volume challenge (engine ${t.engineVersion}): ${t.verdict.toUpperCase()}`,
    `  tidal volume  ${n(t.baselineTidalVolumeMl, 0, ' mL')} → ${n(t.challengeTidalVolumeMl, 0, ' mL')}  (${n(t.baselineMlPerKg)} → ${n(t.challengeMlPerKg)} mL/kg PBW), held ${n(t.challengeHeldSeconds, 0, ' s')}`,
    `  PPV           ${n(t.baselinePpv, 1, ' %')} → ${n(t.challengePpv, 1, ' %')}  ΔPPV ${n(t.deltaPpv, 1, ' points')}  (threshold ${t.threshold} points)`,
    `  source        ${t.thresholdSource}`,
  ];
  if (t.reasonTexts.length) out.push('Cannot be judged:', ...t.reasonTexts.map((r) => `  - ${r}`));
  out.push('Cautions:', ...t.cautions.map((c) => `  - ${c}`));
  return out.join('\n');
}
