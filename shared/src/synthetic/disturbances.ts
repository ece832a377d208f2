import type { ChannelRole } from '../schemas/ingest';
import type { Prng } from './prng';
import type { Disturbance } from './types';

export interface SignalSet {
  abp: Float64Array | null;
  pleth: Float64Array | null;
  paw: Float64Array | null;
  co2: Float64Array | null;
}

interface Scale {
  fs: number;
  /** Mean pulse pressure, mmHg. */
  pp: number;
  /** Mean pleth AC amplitude, raw units. */
  ac: number;
}

const span = (fs: number, n: number, start: number, duration: number): [number, number] => [
  Math.max(0, Math.round(start * fs)),
  Math.min(n, Math.round((start + duration) * fs)),
];

function pulseAmplitude(role: ChannelRole, s: Scale): number {
  if (role === 'abp') return s.pp;
  if (role === 'pleth') return s.ac;
  if (role === 'paw') return 10;
  return 20;
}

/** Over-damped line: two causal first-order low-pass stages (the catheter–transducer acting slow). */
function damp(x: Float64Array, fs: number, cutoffHz: number): void {
  const alpha = 1 - Math.exp((-2 * Math.PI * cutoffHz) / fs);
  for (let stage = 0; stage < 2; stage++) {
    let y = x[0];
    for (let i = 0; i < x.length; i++) {
      y += alpha * (x[i] - y);
      x[i] = y;
    }
  }
}

/** Fast flush as the catheter sees it: a square wave at 300 mmHg (the bag pressure), released at once. */
function flushSquare(x: Float64Array, fs: number, start: number, duration: number): void {
  const [a, b] = span(fs, x.length, start, duration);
  for (let i = a; i < b; i++) x[i] = 300;
}

/**
 * Second-order catheter–transducer model x'' + 2ζωn x' + ωn² x = ωn² u (Gardner 1981), integrated
 * with classical Runge–Kutta at 16 sub-steps per sample, input linearly interpolated; starts at
 * rest on the first sample.
 */
export function catheterResponse(u: Float64Array, fs: number, fn: number, zeta: number): Float64Array {
  const w = 2 * Math.PI * fn;
  const sub = 16;
  const h = 1 / (fs * sub);
  const out = new Float64Array(u.length);
  let x = u[0];
  let v = 0;
  out[0] = x;
  const acc = (xx: number, vv: number, uu: number): number => w * w * (uu - xx) - 2 * zeta * w * vv;
  for (let i = 1; i < u.length; i++) {
    const u0 = u[i - 1];
    const du = u[i] - u0;
    for (let s = 0; s < sub; s++) {
      const ua = u0 + (du * s) / sub;
      const um = u0 + (du * (s + 0.5)) / sub;
      const ub = u0 + (du * (s + 1)) / sub;
      const k1x = v;
      const k1v = acc(x, v, ua);
      const k2x = v + 0.5 * h * k1v;
      const k2v = acc(x + 0.5 * h * k1x, v + 0.5 * h * k1v, um);
      const k3x = v + 0.5 * h * k2v;
      const k3v = acc(x + 0.5 * h * k2x, v + 0.5 * h * k2v, um);
      const k4x = v + h * k3v;
      const k4v = acc(x + h * k3x, v + h * k3v, ub);
      x += (h / 6) * (k1x + 2 * k2x + 2 * k3x + k4x);
      v += (h / 6) * (k1v + 2 * k2v + 2 * k3v + k4v);
    }
    out[i] = x;
  }
  return out;
}

/** Fast flush: ramp to ~300 mmHg plateau, then an under-damped ringing back (Gardner 1981 shape). */
function flush(x: Float64Array, fs: number, start: number, duration: number): void {
  const [a, b] = span(fs, x.length, start, duration);
  const ringEnd = Math.min(x.length, b + Math.round(0.5 * fs));
  for (let i = a; i < b; i++) x[i] = 300 - 2 * Math.exp(-(i - a) / (0.05 * fs));
  const fn = 15; // natural frequency, Hz
  const zeta = 0.15;
  for (let i = b; i < ringEnd; i++) {
    const t = (i - b) / fs;
    const env = Math.exp(-zeta * 2 * Math.PI * fn * t);
    x[i] = x[i] + (300 - x[i]) * env * Math.cos(2 * Math.PI * fn * t);
  }
}

/** Smoothed random swings: a random walk low-passed to a few Hz, plus occasional steps. */
function motion(x: Float64Array, fs: number, start: number, duration: number, size: number, rng: Prng): void {
  const [a, b] = span(fs, x.length, start, duration);
  let v = 0;
  let y = 0;
  const alpha = 1 - Math.exp((-2 * Math.PI * 3) / fs);
  for (let i = a; i < b; i++) {
    v += rng.normal() * size * 0.25; // stationary sd ≈ size
    v *= 0.97;
    y += alpha * (v - y);
    x[i] += y;
  }
}

/** Applies the sample-level disturbances in a physical order: line, then artefacts, then gaps. */
export function applySignalDisturbances(signals: SignalSet, list: Disturbance[], scale: Scale, rng: Prng): void {
  const { fs } = scale;
  const pulsatile: ChannelRole[] = ['abp', 'pleth'];
  for (const d of list) {
    if (d.kind === 'damping' && signals.abp) damp(signals.abp, fs, d.cutoffHz);
  }
  const catheter = list.find((d): d is Extract<Disturbance, { kind: 'catheter' }> => d.kind === 'catheter');
  if (catheter && signals.abp) {
    for (const d of list) if (d.kind === 'flush') flushSquare(signals.abp, fs, d.start, d.duration);
    signals.abp.set(catheterResponse(signals.abp, fs, catheter.naturalFrequencyHz, catheter.dampingRatio));
  }
  for (const d of list) {
    const abp = signals.abp;
    if (d.kind === 'flush' && abp && !catheter) flush(abp, fs, d.start, d.duration);
    if (d.kind === 'clipping' && abp) {
      let sum = 0;
      for (const v of abp) sum += v;
      const mean = sum / abp.length;
      // Mean pressure sits about a third of the way up the pulse: clip at DBP + level × PP.
      const level = mean - scale.pp / 3 + d.level * scale.pp;
      for (let i = 0; i < abp.length; i++) if (abp[i] > level) abp[i] = level;
    }
    if (d.kind === 'flat-line' && abp) {
      const [a, b] = span(fs, abp.length, d.start, d.duration);
      const value = d.value ?? abp[a];
      abp.fill(value, a, b);
    }
  }
  for (const d of list) {
    if (d.kind === 'baseline-wander') {
      for (const role of pulsatile) {
        const x = signals[role];
        if (!x) continue;
        const amp = d.amplitude * pulseAmplitude(role, scale);
        for (let i = 0; i < x.length; i++) x[i] += amp * Math.sin((2 * Math.PI * d.frequencyHz * i) / fs);
      }
    }
    if (d.kind === 'noise') {
      for (const role of d.roles ?? pulsatile) {
        const x = signals[role];
        if (!x) continue;
        const sd = d.level * pulseAmplitude(role, scale);
        for (let i = 0; i < x.length; i++) x[i] += sd * rng.normal();
      }
    }
    if (d.kind === 'motion') {
      for (const role of pulsatile) {
        const x = signals[role];
        if (x) motion(x, fs, d.start, d.duration, d.amplitude * pulseAmplitude(role, scale), rng);
      }
    }
  }
  for (const d of list) {
    if (d.kind !== 'gap') continue;
    for (const role of d.roles ?? (['abp', 'pleth', 'paw', 'co2'] as ChannelRole[])) {
      const x = signals[role];
      if (!x) continue;
      const [a, b] = span(fs, x.length, d.start, d.duration);
      x.fill(Number.NaN, a, b);
    }
  }
}
