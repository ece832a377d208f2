import type { ChannelRole } from '../schemas/ingest';
import { breathIndexAt, breathPhase, planBeats, planBreaths, type PlannedBeat } from './beat-plan';
import { applySignalDisturbances } from './disturbances';
import { createPrng } from './prng';
import type { Disturbance, SyntheticChannel, SyntheticSpec, SyntheticTruth, SyntheticWindow, TruthArterialBeat, TruthCycle, TruthPlethBeat } from './types';
import { airwayPressure, ARTERIAL_SHAPE, capnogram, PLETH_SHAPE, pulseValue, type PulseBeat, type PulseShape } from './waveforms';

/** Pulse transit from the arterial line to the finger, s. */
const PLETH_DELAY = 0.22;

function find<K extends Disturbance['kind']>(list: Disturbance[], kind: K): Extract<Disturbance, { kind: K }> | undefined {
  return list.find((d) => d.kind === kind) as Extract<Disturbance, { kind: K }> | undefined;
}

/** Renders a beat series into samples at times i / fs. */
function render(beats: PulseBeat[], shape: PulseShape, n: number, fs: number): Float64Array {
  const out = new Float64Array(n);
  let k = 0;
  for (let i = 0; i < n; i++) {
    const t = i / fs;
    while (k + 1 < beats.length && beats[k].nextFoot <= t) k++;
    out[i] = pulseValue(beats[k], shape, t);
  }
  return out;
}

function variation(values: number[]): number | null {
  if (values.length < 2) return null;
  const max = Math.max(...values);
  const min = Math.min(...values);
  return (100 * (max - min)) / ((max + min) / 2);
}

/**
 * Generates one deterministic synthetic window: channels as an analysis engine receives them, and
 * the truth put in (beats, per-cycle PPV/SPV/ΔPOP computed from those beats, disturbances).
 *
 * The pulse pressure of each beat is PP × (1 + (PPV/200)·sin 2πφ), φ the ventilator phase at its
 * systolic peak, so the continuous swing is exactly the nominal PPV; the per-cycle values in the
 * truth are what the beats actually sampled (smaller than nominal when few beats fall in a breath).
 */
export function generateWindow(spec: SyntheticSpec): SyntheticWindow {
  const rng = createPrng(spec.seed);
  const duration = spec.durationSeconds ?? 60;
  const fs = spec.sampleRate ?? 125;
  const n = Math.round(duration * fs);
  const roles: ChannelRole[] = spec.channels ?? ['abp', 'paw'];
  const disturbances = spec.disturbances ?? [];
  const dbp0 = spec.meanDbp ?? 70;
  const pp0 = spec.meanPp ?? 45;
  const mPp = spec.ppv / 200;
  const deltaPop = spec.deltaPop ?? spec.ppv;
  const mPop = deltaPop / 200;
  const dc0 = spec.plethDc ?? 1000;
  const pi0 = spec.perfusionIndex ?? 2;
  const ac0 = (pi0 / 100) * dc0;
  const rrPeriod = 60 / spec.respiratoryRate;
  const ti = rrPeriod * ((spec.ieRatio ?? 0.5) / (1 + (spec.ieRatio ?? 0.5)));
  const peep = spec.peep ?? 5;
  const pause = spec.inspiratoryPauseSeconds ?? 0;
  // With volume and compliance the plateau is PEEP + Vt/C; the resistive part adds 30 % of the elastic swing.
  const plateau = spec.tidalVolumeMl !== undefined && spec.complianceMlPerCmH2O ? peep + spec.tidalVolumeMl / spec.complianceMlPerCmH2O : null;
  const pip = plateau !== null ? plateau + 0.3 * (plateau - peep) : (spec.peakPressure ?? 22);

  const planned: PlannedBeat[] = planBeats(
    {
      duration,
      heartRate: spec.heartRate,
      hrVariability: spec.hrVariability ?? 0.01,
      ectopicCount: find(disturbances, 'ectopic')?.count ?? 0,
      irregularVariability: find(disturbances, 'irregular-rhythm')?.variability ?? 0,
    },
    rng,
  );
  const breaths = planBreaths(duration, spec.respiratoryRate, rng);

  // Spontaneous efforts late in expiration of evenly spread breaths.
  const efforts: number[] = [];
  const spont = find(disturbances, 'spontaneous-breaths');
  if (spont && spont.count > 0) {
    const inside = breaths.filter((s) => s > 1 && s + rrPeriod < duration - 1);
    const step = inside.length / (spont.count + 1);
    for (let e = 1; e <= spont.count; e++) {
      const s = inside[Math.min(inside.length - 1, Math.floor(e * step))];
      if (s !== undefined) efforts.push(s + ti + (rrPeriod - ti) * rng.uniform(0.35, 0.6));
    }
  }
  const effortPulseFactor = (t: number): number => {
    // A patient's own inspiration lowers intrathoracic pressure: pulses shrink for ~1 s.
    let f = 1;
    for (const e of efforts) if (t >= e && t < e + 1.2) f *= 0.78;
    return f;
  };

  const abpBeats: PulseBeat[] = [];
  const plethBeats: PulseBeat[] = [];
  const truthAbp: TruthArterialBeat[] = [];
  const truthPleth: TruthPlethBeat[] = [];
  const dbps = planned.map((b) => dbp0 + 0.25 * mPp * pp0 * Math.sin(2 * Math.PI * breathPhase(breaths, b.footTime)));
  for (let k = 0; k + 1 < planned.length; k++) {
    const b = planned[k];
    const next = planned[k + 1];
    const L = next.footTime - b.footTime;
    const peakT = b.footTime + Math.min(ARTERIAL_SHAPE.rise, ARTERIAL_SHAPE.riseFraction * L);
    const swing = Math.sin(2 * Math.PI * breathPhase(breaths, peakT));
    const pp = pp0 * b.sizeFactor * (1 + mPp * swing) * effortPulseFactor(peakT);
    abpBeats.push({ foot: b.footTime, nextFoot: next.footTime, base: dbps[k], nextBase: dbps[k + 1], amplitude: pp });
    const ac = ac0 * b.sizeFactor * (1 + mPop * swing) * effortPulseFactor(peakT);
    const pFoot = b.footTime + PLETH_DELAY;
    plethBeats.push({ foot: pFoot, nextFoot: next.footTime + PLETH_DELAY, base: dc0, nextBase: dc0, amplitude: ac });
    if (b.footTime >= 0 && peakT < duration) {
      truthAbp.push({ footTime: b.footTime, peakTime: peakT, sbp: dbps[k] + pp, dbp: dbps[k], pp, ectopic: b.ectopic });
    }
    const pPeak = pFoot + Math.min(PLETH_SHAPE.rise, PLETH_SHAPE.riseFraction * L);
    if (pFoot >= 0 && pPeak < duration) {
      truthPleth.push({ footTime: pFoot, peakTime: pPeak, amplitude: ac, dc: dc0 + ac / 2, ectopic: b.ectopic });
    }
  }
  // The first pleth beat starts before the window: prepend one so t = 0 is covered.
  if (plethBeats.length && plethBeats[0].foot > 0) {
    const first = plethBeats[0];
    plethBeats.unshift({ foot: first.foot - (first.nextFoot - first.foot), nextFoot: first.foot, base: dc0, nextBase: dc0, amplitude: first.amplitude });
  }

  const channels: SyntheticChannel[] = [];
  const abp = roles.includes('abp') ? render(abpBeats, ARTERIAL_SHAPE, n, fs) : null;
  const pleth = roles.includes('pleth') ? render(plethBeats, PLETH_SHAPE, n, fs) : null;
  let paw: Float64Array | null = null;
  let co2: Float64Array | null = null;
  if (roles.includes('paw') || roles.includes('co2')) {
    paw = new Float64Array(n);
    co2 = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const t = i / fs;
      const j = breathIndexAt(breaths, t);
      const u = t - breaths[Math.max(0, j)];
      paw[i] = airwayPressure(u, rrPeriod, ti, peep, pip, pause, plateau);
      co2[i] = capnogram(u, ti, spec.etco2 ?? 38);
      for (const e of efforts) {
        const v = t - e;
        if (v >= 0 && v < 0.35)
          paw[i] -= 3 * Math.sin((Math.PI * v) / 0.35); // trigger dip below PEEP
        else if (v >= 0.35 && v < 1.2) paw[i] += 7 * Math.sin((Math.PI * (v - 0.35)) / 0.85); // supported breath
      }
    }
  }
  const signals = { abp, pleth, paw, co2 };
  applySignalDisturbances(signals, disturbances, { fs, pp: pp0, ac: ac0 }, rng);
  if (signals.pleth && spec.plethScaling === 'auto-scaled') autoScale(signals.pleth);
  for (const role of roles) {
    const samples = signals[role];
    if (!samples) continue;
    const unit = role === 'abp' ? 'mmHg' : role === 'paw' ? 'cmH2O' : role === 'co2' ? 'mmHg' : 'au';
    channels.push({ role, sampleRate: fs, unit, samples });
  }

  const cycles: TruthCycle[] = [];
  for (let j = 0; j + 1 < breaths.length; j++) {
    const start = breaths[j];
    const end = breaths[j + 1];
    if (start < 0 || end > duration) continue;
    const inAbp = truthAbp.filter((b) => b.peakTime >= start && b.peakTime < end);
    const inPleth = truthPleth.filter((b) => b.peakTime >= start && b.peakTime < end);
    const sbps = inAbp.map((b) => b.sbp);
    cycles.push({
      startTime: start,
      endTime: end,
      ppv: variation(inAbp.map((b) => b.pp)),
      spv: sbps.length >= 2 ? Math.max(...sbps) - Math.min(...sbps) : null,
      deltaPop: variation(inPleth.map((b) => b.amplitude)),
      beatCount: inAbp.length,
      containsEctopic: inAbp.some((b) => b.ectopic),
      containsSpontaneousEffort: efforts.some((e) => e + 1.2 >= start && e < end),
    });
  }
  const ibis = truthAbp.slice(1).map((b, k) => b.footTime - truthAbp[k].footTime);
  const withPpv = cycles.filter((c) => c.ppv !== null);
  const clean = withPpv.filter((c) => !c.containsEctopic && !c.containsSpontaneousEffort).slice(-3);
  const avg = (xs: TruthCycle[]): number | null => (xs.length ? xs.reduce((a, c) => a + (c.ppv as number), 0) / xs.length : null);
  const plat = pause > 0 ? (plateau ?? pip - 0.3 * (pip - peep)) : null;
  const truth: SyntheticTruth = {
    spec,
    heartRate: ibis.length ? 60 / (ibis.reduce((a, b) => a + b, 0) / ibis.length) : spec.heartRate,
    respiratoryRate: spec.respiratoryRate,
    nominalPpv: spec.ppv,
    nominalDeltaPop: deltaPop,
    perfusionIndex: spec.plethScaling === 'auto-scaled' ? null : pi0,
    beats: { abp: truthAbp, pleth: truthPleth },
    cycles,
    spontaneousEfforts: efforts,
    disturbances,
    ppvAllCycles: avg(withPpv),
    ppvLastCleanCycles: avg(clean),
    airway: {
      peep,
      peak: pip,
      plateau: plat,
      drivingPressure: plat !== null ? plat - peep : null,
      compliance: spec.tidalVolumeMl !== undefined && plat !== null ? spec.tidalVolumeMl / (plat - peep) : (spec.complianceMlPerCmH2O ?? null),
    },
  };
  return { channels, truth };
}

/** Monitor-style display normalisation: removes the DC level and fixes the span (ΔPOP kept, PI lost). */
function autoScale(x: Float64Array): void {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of x) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  const span = hi - lo || 1;
  for (let i = 0; i < x.length; i++) x[i] = ((x[i] - lo) / span) * 100;
}
