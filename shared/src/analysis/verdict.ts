import type { QualifiedBeats } from './beat-quality';
import type { BreathBoundaries } from './cycles';
import type {
  ChecklistContext,
  ContextSource,
  ErrorDirection,
  FlagCode,
  RespiratoryMechanics,
  AnalysisContext,
  AnalysisSettings,
  ArterialLineReport,
  ChannelReport,
  Flag,
  IndexName,
  Indices,
  RespiratoryCycle,
  Verdict,
} from './types';

export interface VerdictInput {
  context: AnalysisContext;
  settings: AnalysisSettings;
  channels: ChannelReport[];
  abp: QualifiedBeats | null;
  pleth: QualifiedBeats | null;
  arterialLine: ArterialLineReport | null;
  bounds: BreathBoundaries | null;
  cycles: RespiratoryCycle[];
  used: RespiratoryCycle[];
  indices: Indices;
  tidalVolumeMlPerKg: number | null;
  /** Checklist context merged from batch and bed, with where each item came from. */
  checklist: ResolvedChecklist;
  mechanics: RespiratoryMechanics | null;
  /** Evidence of spontaneous effort beyond the dips below PEEP. */
  effortEvidence: string[];
  /** Ventilator settings that changed inside the window, in words. */
  settingChanges: string[];
  selection: { kept: number | null; dropped: number | null; droppedCount: number; droppedFraction: number; total: number };
}

export type ResolvedChecklist = Partial<Record<keyof ChecklistContext, ContextSource>>;

/** Checklist items: each with severity, direction and the published source (figures from memory). */
const CHECKLIST: Record<keyof ChecklistContext, { code: FlagCode; severity: Flag['severity']; direction: ErrorDirection; reason: string; reference: string }> =
  {
    openChest: {
      code: 'open-chest',
      severity: 'critical',
      direction: 'false-low',
      reason: 'chest open: heart–lung interaction is weakened, PPV understates fluid responsiveness and its thresholds do not apply',
      reference: 'de Waal et al., Crit Care Med 2009 (open chest, from memory); Ann Intensive Care 2021 checklist',
    },
    intraAbdominalPressureHigh: {
      code: 'intra-abdominal-pressure-high',
      severity: 'warning',
      direction: 'false-high',
      reason: 'raised intra-abdominal pressure increases PPV independently of preload; the usual thresholds read too high',
      reference: 'Duperret et al., Intensive Care Med 2007 (intra-abdominal hypertension, from memory)',
    },
    rightVentricularDysfunction: {
      code: 'right-ventricular-dysfunction',
      severity: 'warning',
      direction: 'false-high',
      reason: 'right ventricular dysfunction: a high PPV can come from right ventricular afterload, not preload dependence',
      reference: 'Mahjoub et al., Crit Care Med 2009 (false positives with RV dysfunction, from memory)',
    },
    extracorporealSupport: {
      code: 'extracorporeal-support',
      severity: 'critical',
      direction: 'unknown',
      reason: 'ECMO or other extracorporeal support: the pulse is not the native output alone; PPV is not validated and the direction of its error is unknown',
      reference: 'common practice (no validation of PPV under extracorporeal support)',
    },
    pronePosition: {
      code: 'prone-position',
      severity: 'warning',
      direction: 'unknown',
      reason: 'prone position changes chest-wall and abdominal compliance; PPV thresholds from supine patients may not apply (direction not established)',
      reference: 'Yonis et al., Crit Care 2017 (prone position, from memory)',
    },
    paediatricPatient: {
      code: 'paediatric-patient',
      severity: 'warning',
      direction: 'unknown',
      reason: 'paediatric patient: PPV thresholds are from adults, and the predicted body weight formula is not validated below adult height',
      reference: 'Gan et al., Anesth Analg 2013 (dynamic indices in children, from memory); Devine formula (ARDSNet) defined for adults',
    },
  };

/** Height below which the predicted body weight formula leaves its adult range (60 in; ARDSNet, common practice). */
const ADULT_HEIGHT_CM = 152.4;

/**
 * White noise above this fraction of the pulse size overstates PPV by about a point (checked on the
 * synthetic grid: 1 % of PP → mean +0.4, max +1.05 points).
 */
const NOISE_FRACTION_OF_PULSE = 0.01;

const PLETH_INDICES: IndexName[] = ['deltaPop', 'perfusionIndex'];
const ABP_INDICES: IndexName[] = ['ppv', 'spv'];
const VARIATION_INDICES: IndexName[] = ['ppv', 'spv', 'deltaPop'];

/** Which indices a flag bears on, from its source. */
function appliesTo(flag: Flag): IndexName[] {
  if (flag.source === 'abp') return ABP_INDICES;
  if (flag.source === 'pleth') return PLETH_INDICES;
  if (flag.source === 'ppv' || flag.source === 'deltaPop' || flag.source === 'spv') return [flag.source];
  return VARIATION_INDICES;
}

/** Quality flags with the likely direction of error (Ann Intensive Care 2016, doi 10.1186/s13613-016-0216-7). */
export function buildFlags(v: VerdictInput): Flag[] {
  const flags: Flag[] = [];
  const push = (f: Flag): void => {
    flags.push(f);
  };
  const { context: cx, settings: s } = v;
  const hasPleth = v.pleth !== null;
  for (const q of [v.abp, v.pleth]) {
    if (!q) continue;
    const src = q.series.source;
    const n = q.series.beats.length;
    if (n >= 8 && q.irregularFraction > s.irregularRhythmFraction) {
      push({
        code: 'irregular-rhythm',
        severity: 'critical',
        direction: 'false-high',
        source: src,
        reason: `${Math.round(q.irregularFraction * 100)} % of beat intervals depart from their neighbours by more than ${Math.round(s.ectopicIntervalFraction * 100)} %: irregular rhythm breaks the per-cycle maximum and minimum`,
      });
    } else if (q.ectopicCount > 0) {
      push({
        code: 'ectopic-beats',
        severity: 'warning',
        direction: 'false-high',
        source: src,
        reason: `${q.ectopicCount} beats with premature or compensatory intervals; the cycles holding them were left out`,
      });
    }
    if (n >= 5 && q.noisyCount >= 3 && q.noisyCount / n >= 0.04) {
      push({
        code: 'noise-motion',
        severity: 'warning',
        source: src,
        reason: `${q.noisyCount} of ${n} beats rejected as noisy or misshapen (noise or motion artefact)`,
      });
    } else if (q.noiseSd !== null && q.medianPulse && q.noiseSd > NOISE_FRACTION_OF_PULSE * q.medianPulse) {
      // Noise on each beat's maximum and minimum widens the per-cycle range: the index reads high.
      push({
        code: 'noise-motion',
        severity: 'warning',
        direction: 'false-high',
        source: src,
        reason: `signal noise about ${((100 * q.noiseSd) / q.medianPulse).toFixed(1)} % of the pulse size: per-beat maxima and minima scatter and the variation reads high`,
      });
    }
    if (q.clippedCount > 0 || (v.channels.find((c) => c.role === src)?.clipping.length ?? 0) > 0) {
      push({
        code: 'clipping',
        severity: 'warning',
        source: src,
        reason: `${src} samples pinned at the window's extreme value (saturated transducer or clipped scale); affected beats were left out`,
      });
    }
  }
  for (const ch of v.channels) {
    const lost = ch.signalLoss.filter((sl) => !ch.flatLines.some((f) => f.startSample <= sl.startSample + 1 && f.endSample >= sl.endSample - 1));
    if (lost.length) {
      const secs = lost.reduce((a, f) => a + f.endTime - f.startTime, 0);
      push({
        code: 'signal-loss',
        severity: secs > 0.5 * ch.durationSeconds ? 'critical' : 'warning',
        direction: 'unknown',
        source: ch.role,
        reference: 'common practice',
        reason: `${ch.role} swings less than a pulse for ${secs.toFixed(1)} s (line lost, closed or disconnected; noise is not beats)`,
      });
    }
    const dur = ch.durationSeconds;
    const flatSeconds = ch.flatLines.reduce((a, f) => a + f.endTime - f.startTime, 0);
    if (ch.flatLines.length) {
      push({
        code: 'flat-line',
        severity: flatSeconds > 0.5 * dur ? 'critical' : 'warning',
        source: ch.role,
        reason: `${ch.role} flat for ${flatSeconds.toFixed(1)} s (stopcock closed, transducer disconnected or signal lost)`,
      });
    }
    if (ch.gaps.length) {
      push({
        code: 'gap',
        severity: ch.gapFraction > 0.5 ? 'critical' : 'warning',
        source: ch.role,
        reason: `${ch.role} has ${ch.gaps.length} gap(s), ${(ch.gapFraction * 100).toFixed(1)} % of samples missing`,
      });
    }
  }
  const al = v.arterialLine;
  const flushTest = al?.flushTests.length ? al.flushTests[al.flushTests.length - 1] : null;
  const how = flushTest
    ? `flush test: ${flushTest.naturalFrequencyHz !== null ? `natural frequency ${flushTest.naturalFrequencyHz.toFixed(1)} Hz, ` : ''}${flushTest.dampingRatio !== null ? `damping ratio ${flushTest.dampingRatio.toFixed(2)}, ` : 'no ringing after release, '}${flushTest.regionText}`
    : null;
  // Directions per index from a second-order catheter model (checked in arterial-line.test.ts):
  // the systolic swing (SPV) shrinks with over-damping and grows with ringing; PPV is a ratio of
  // two pulse pressures both distorted, and its error can go either way.
  if (al?.dampingSuspected) {
    push({
      code: 'arterial-damped',
      severity: 'warning',
      direction: 'unknown',
      directionByIndex: { spv: 'false-low', ppv: 'unknown' },
      source: 'abp',
      reference: 'Gardner, Anesthesiology 1981;54:227',
      reason: `arterial line over-damped (${how ?? 'no dicrotic notch, slow upstroke'}): systolic pressure and SPV understated; the direction of the PPV error is not known`,
    });
  }
  if (al?.underDampingSuspected) {
    push({
      code: 'arterial-underdamped',
      severity: 'warning',
      direction: 'unknown',
      directionByIndex: { spv: 'false-high', ppv: 'unknown' },
      source: 'abp',
      reference: 'Gardner, Anesthesiology 1981;54:227',
      reason: `arterial line under-damped (${how ?? 'ringing on the systolic peak'}): systolic overshoot, SPV overstated; the direction of the PPV error is not known`,
    });
  }
  if (v.arterialLine?.flushSuspected) {
    push({ code: 'arterial-flush', severity: 'warning', source: 'abp', reason: 'pressure plateau above 250 mmHg: line flush or zeroing in the window' });
  }
  if (!v.abp && !v.pleth) push({ code: 'no-pulse-source', severity: 'critical', reason: 'no arterial pressure or pleth channel with signal' });
  if (!v.bounds || v.bounds.onsets.length < 2) {
    push({ code: 'no-respiration-source', severity: 'critical', reason: v.bounds?.reason ?? 'no respiratory cycles could be found' });
  } else if (v.bounds.source === 'inferred') {
    push({
      code: 'respiration-inferred',
      severity: 'warning',
      reason: `no airway pressure or CO2: cycles placed from the set rate (${cx.setRespiratoryRate} /min) with the phase taken from the pulse itself`,
    });
  }
  const efforts = v.bounds?.efforts.length ?? 0;
  const irregularCycles = v.cycles.filter((c) => c.rejectReasons.includes('irregular-length')).length;
  // A change of set rate or volume inside the window makes cycles irregular by itself.
  const irregularFromEffort = !v.settingChanges.length && v.cycles.length >= 4 && irregularCycles / v.cycles.length > 0.25;
  if (efforts > 0 || irregularFromEffort) {
    push({
      code: 'spontaneous-breathing',
      severity: 'critical',
      direction: 'false-high',
      source: 'paw',
      reason: `${efforts} inspiratory effort(s) below PEEP and ${irregularCycles} irregular breath(s): dynamic indices assume controlled ventilation without patient effort`,
    });
  }
  if (v.effortEvidence.length && !flags.some((f) => f.code === 'spontaneous-breathing')) {
    push({
      code: 'spontaneous-breathing',
      severity: 'critical',
      direction: 'false-high',
      source: 'paw',
      reference: 'Heenen et al., Crit Care 2006 (from memory); Ann Intensive Care 2021 checklist',
      reason: `signs of spontaneous effort: ${v.effortEvidence.join('; ')}`,
    });
  }
  if (v.settingChanges.length) {
    push({
      code: 'settings-changed',
      severity: 'critical',
      direction: 'either',
      reference: 'common practice (dynamic indices are read in a steady state, e.g. Michard, Anesthesiology 2005)',
      reason: `ventilator settings changed inside the window (${v.settingChanges.join('; ')}): cycles before and after the change are not comparable, and their breath-to-breath differences are not read as patient effort`,
    });
  }
  if (cx.ventilationMode === undefined || cx.ventilationMode === 'unknown') {
    push({
      code: 'ventilation-unconfirmed',
      severity: 'warning',
      direction: 'either',
      reference: 'Michard, Anesthesiology 2005 (controlled ventilation is the first validity condition)',
      reason: `ventilation mode ${cx.ventilationMode === 'unknown' ? 'declared unknown' : 'not given'}: controlled ventilation without patient effort cannot be assumed`,
    });
  }
  if (cx.ventilationMode === 'spontaneous' || cx.ventilationMode === 'assisted') {
    push({
      code: 'ventilation-not-controlled',
      severity: 'critical',
      direction: 'false-high',
      reason: `ventilation mode declared "${cx.ventilationMode}": indices are validated under controlled mechanical ventilation only`,
    });
  }
  const target = s.cyclesToAverage;
  if (v.bounds && v.bounds.onsets.length >= 2 && v.used.length < target) {
    push({
      code: 'too-few-cycles',
      severity: v.used.length === 0 ? 'critical' : 'warning',
      reason: `${v.used.length} consecutive usable cycle(s) found, ${target} wanted`,
    });
  }
  const ratio = v.indices.hrRrRatio.value;
  if (ratio !== null && ratio <= s.minHrRrRatio) {
    push({
      code: 'low-hr-rr-ratio',
      severity: 'critical',
      direction: 'false-low',
      reason: `HR/RR ${ratio.toFixed(2)} ≤ ${s.minHrRrRatio}: too few beats per breath (De Backer 2009)`,
    });
  }
  if (v.tidalVolumeMlPerKg === null) {
    push({
      code: 'tidal-volume-unknown',
      severity: 'warning',
      reason: 'tidal volume or patient height/sex not given: cannot confirm ≥ 8 mL/kg predicted body weight',
    });
  } else if (v.tidalVolumeMlPerKg < s.minTidalVolumeMlPerKg) {
    push({
      code: 'tidal-volume-low',
      severity: 'critical',
      direction: 'false-low',
      reason: `tidal volume ${v.tidalVolumeMlPerKg.toFixed(1)} mL/kg PBW < ${s.minTidalVolumeMlPerKg}`,
    });
  }
  const mech = v.mechanics;
  const c = mech?.complianceMlPerCmH2O ?? null;
  // Vt / (peak − PEEP) is only a lower bound of the compliance (the peak holds the resistive
  // pressure too): at or under the limit it says "possibly low" (info), never "low".
  const fromPeak = mech?.complianceSource === 'airway-pressure' && mech.plateauSource === 'estimated-from-peak';
  if (c !== null && c <= s.lowComplianceMlPerCmH2O && !fromPeak) {
    const from = mech?.complianceSource === 'airway-pressure' ? 'Vt / (plateau − PEEP)' : 'as given';
    push({
      code: 'compliance-low',
      severity: 'warning',
      direction: 'false-low',
      reference: 'Monnet et al., Crit Care Med 2012 (from memory)',
      reason: `respiratory-system compliance ${c.toFixed(1)} mL/cmH2O (${from}) ≤ ${s.lowComplianceMlPerCmH2O}: PPV less reliable, may read low`,
    });
  }
  if (c !== null && c <= s.lowComplianceMlPerCmH2O && fromPeak) {
    push({
      code: 'compliance-estimated',
      severity: 'info',
      direction: 'false-low',
      reference: 'Monnet et al., Crit Care Med 2012 (from memory); common practice',
      reason: `no end-inspiratory pause: Vt / (peak − PEEP) = ${c.toFixed(1)} mL/cmH2O is a lower bound of the compliance; it may be low (≤ ${s.lowComplianceMlPerCmH2O}), an end-inspiratory pause would tell`,
    });
  }
  for (const key of Object.keys(CHECKLIST) as (keyof ChecklistContext)[]) {
    const from = v.checklist[key];
    if (!from) continue;
    const item = CHECKLIST[key];
    push({
      code: item.code,
      severity: item.severity,
      direction: item.direction,
      contextSource: from,
      reference: item.reference,
      reason: `${item.reason} (set in the ${from === 'bed' ? 'bed settings' : 'batch context'})`,
    });
  }
  if (!v.checklist.paediatricPatient && cx.patientHeightCm !== undefined && cx.patientHeightCm < ADULT_HEIGHT_CM) {
    const item = CHECKLIST.paediatricPatient;
    push({
      code: item.code,
      severity: 'warning',
      direction: 'unknown',
      contextSource: 'batch',
      reference: item.reference,
      reason: `height ${cx.patientHeightCm} cm below the adult range of the predicted body weight formula (${ADULT_HEIGHT_CM} cm): mL/kg PBW not validated`,
    });
  }
  const sel = v.selection;
  if (
    sel.kept !== null &&
    sel.dropped !== null &&
    sel.droppedCount >= 2 &&
    Math.abs(sel.dropped - sel.kept) > Math.max(s.selectionBiasPoints, 0.2 * sel.kept)
  ) {
    const low = sel.kept < sel.dropped;
    push({
      code: 'selection-bias',
      severity: 'warning',
      direction: low ? 'false-low' : 'false-high',
      reference: 'common practice (averaging consecutive cycles assumes the cycles kept represent the window)',
      reason: `cycles kept vary by ${sel.kept.toFixed(1)} % on average, the ${sel.droppedCount} dropped ones by ${sel.dropped.toFixed(1)} %: the value likely reads ${low ? 'low' : 'high'}`,
    });
  }
  if (sel.total >= 4 && sel.droppedFraction > s.maxDroppedCycleFraction) {
    push({
      code: 'cycles-dropped',
      severity: 'warning',
      direction: 'unknown',
      reference: 'common practice',
      reason: `${Math.round(sel.droppedFraction * 100)} % of the respiratory cycles were dropped (more than ${Math.round(s.maxDroppedCycleFraction * 100)} %): the cycles kept may not represent the window`,
    });
  }
  // Pleth confounders (common practice): vasomotor tone, probe site, monitor processing.
  if (cx.vasopressorRunning) {
    push({
      code: 'vasopressor-running',
      severity: hasPleth ? 'warning' : 'info',
      source: 'pleth',
      reason: 'vasopressor running: vasoconstriction changes the pleth independently of preload',
    });
  }
  if (hasPleth && cx.probeSite === 'finger') {
    push({
      code: 'finger-probe',
      severity: 'warning',
      source: 'pleth',
      reason: 'finger probe: more distorted by vasoconstriction than an earlobe or forehead probe',
    });
  }
  if (hasPleth && cx.plethScaling === 'auto-scaled') {
    push({
      code: 'pleth-auto-scaled',
      severity: 'warning',
      source: 'pleth',
      reason: 'pleth auto-scaled by the monitor: PI not computable, ΔPOP from processed pleth agrees poorly with PPV',
    });
  }
  if (v.pleth) {
    // PPG window quality (Orphanidou et al., IEEE JBHI 2015): HR 40–180 /min, no gap over 3 s,
    // longest / shortest beat interval under 2.2.
    const ibis = v.pleth.series.beats.filter((b) => b.accepted && b.ibi !== null).map((b) => b.ibi as number);
    const problems: string[] = [];
    if (ibis.length >= 2) {
      const hr = (60 * ibis.length) / ibis.reduce((a, b) => a + b, 0);
      if (hr < 40 || hr > 180) problems.push(`pulse rate ${hr.toFixed(0)} /min outside 40–180`);
      const ratio = Math.max(...ibis) / Math.min(...ibis);
      if (ratio >= 2.2) problems.push(`longest/shortest interval ${ratio.toFixed(1)} ≥ 2.2`);
    } else problems.push('fewer than three accepted pulses');
    const beats = v.pleth.series.beats;
    for (let k = 1; k < beats.length; k++) {
      if (beats[k].footTime - beats[k - 1].footTime > 3) {
        problems.push('more than 3 s without a pulse');
        break;
      }
    }
    const plethReport = v.channels.find((c) => c.role === 'pleth');
    if (plethReport?.gaps.some((g) => g.endTime - g.startTime > 3) && !problems.includes('more than 3 s without a pulse'))
      problems.push('a gap longer than 3 s');
    if (problems.length)
      push({ code: 'pleth-quality-low', severity: 'warning', source: 'pleth', reason: `pleth quality rules not met: ${problems.join('; ')}` });
    if (cx.plethScaling === undefined) {
      push({
        code: 'pleth-processing-unknown',
        severity: 'warning',
        source: 'pleth',
        reason:
          'whether the pleth is raw or auto-scaled by the monitor was not declared: ΔPOP from a processed pleth agrees poorly with PPV, and PI needs the raw DC level',
      });
    }
  }
  if (cx.builtInFiltering) {
    push({
      code: 'monitor-filtering-declared',
      severity: 'info',
      source: hasPleth ? 'pleth' : undefined,
      reason: `monitor declares its own filtering: ${cx.builtInFiltering}`,
    });
  }
  let implausibleFlagged = false;
  for (const name of ['ppv', 'deltaPop'] as const) {
    const val = v.indices[name].value;
    if (val !== null && (val < 0 || val > s.plausibleMaxPercent)) {
      implausibleFlagged = true;
      push({
        code: 'value-implausible',
        severity: 'critical',
        source: name,
        reason: `${name} ${val.toFixed(1)} % outside 0–${s.plausibleMaxPercent} %: an artefact, not a measurement`,
      });
    }
  }
  // Cycles whose own value was implausible were left out; say so even if the window still has a value.
  const implausibleCycles = v.cycles.filter((c) => c.rejectReasons.includes('value-implausible')).length;
  if (!implausibleFlagged && implausibleCycles > 0) {
    push({
      code: 'value-implausible',
      severity: v.used.length === 0 ? 'critical' : 'warning',
      reason: `${implausibleCycles} cycle(s) with a variation outside 0–${s.plausibleMaxPercent} % (artefact, not a measurement) were left out`,
    });
  }
  return flags;
}

const rank: Record<Verdict, number> = { valid: 0, questionable: 1, 'not-valid': 2 };
const bySeverity = (sev: Flag['severity']): Verdict => (sev === 'critical' ? 'not-valid' : sev === 'warning' ? 'questionable' : 'valid');

/** Window verdict (that of the primary index) and per-index verdicts where they differ. */
export function judge(flags: Flag[], indices: Indices, hasAbp: boolean): { verdict: Verdict; indexVerdicts: Partial<Record<IndexName, Verdict>> } {
  const names: IndexName[] = ['ppv', 'spv', 'deltaPop', 'perfusionIndex'];
  const per: Partial<Record<IndexName, Verdict>> = {};
  for (const name of names) {
    let v: Verdict = indices[name].value === null ? 'not-valid' : 'valid';
    for (const f of flags) {
      if (!appliesTo(f).includes(name) && !(name === 'perfusionIndex' && f.source === 'pleth')) continue;
      const fv = bySeverity(f.severity);
      if (rank[fv] > rank[v]) v = fv;
    }
    per[name] = v;
  }
  // Rates are measurements in their own right: the validity conditions of the dynamic indices
  // (ventilation, tidal volume, rhythm) do not make them wrong. A rate taken from the set
  // ventilator rate rather than the signal is only as good as that setting.
  const inferred = flags.some((f) => f.code === 'respiration-inferred');
  per.heartRate = 'valid';
  per.respiratoryRate = inferred ? 'questionable' : 'valid';
  per.hrRrRatio = per.respiratoryRate;
  const verdict = (hasAbp ? per.ppv : per.deltaPop) ?? 'not-valid';
  const indexVerdicts: Partial<Record<IndexName, Verdict>> = {};
  // Indices without a value say why in notComputableReason; only computed ones get a verdict here.
  for (const name of [...names, 'heartRate', 'respiratoryRate', 'hrRrRatio'] as IndexName[]) {
    if (indices[name].value !== null && per[name] !== verdict) indexVerdicts[name] = per[name];
  }
  return { verdict, indexVerdicts };
}
