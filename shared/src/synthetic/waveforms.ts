/**
 * Pulse and breath shapes. The arterial pulse is a shaped template (smooth upstroke, systolic
 * decline to a dicrotic notch, dicrotic wave, exponential diastolic run-off to the next beat's
 * diastolic pressure), built so that each beat's maximum is its SBP and its foot its DBP exactly.
 */

export interface PulseBeat {
  foot: number;
  /** Time of the next beat's foot. */
  nextFoot: number;
  base: number;
  /** The next beat's base, reached exactly at nextFoot. */
  nextBase: number;
  amplitude: number;
}

export interface PulseShape {
  /** Upstroke duration, s (capped at riseFraction of the interval). */
  rise: number;
  riseFraction: number;
  /** Time of the notch after the foot, s (capped at notchFraction of the interval). */
  notch: number;
  notchFraction: number;
  /** Notch level as a fraction of the amplitude above base. */
  notchLevel: number;
  /** Dicrotic wave height, fraction of the amplitude. */
  dicrotic: number;
  /** Diastolic run-off time constant, s. */
  runoff: number;
}

export const ARTERIAL_SHAPE: PulseShape = { rise: 0.1, riseFraction: 0.25, notch: 0.32, notchFraction: 0.55, notchLevel: 0.5, dicrotic: 0.06, runoff: 0.5 };
export const PLETH_SHAPE: PulseShape = { rise: 0.17, riseFraction: 0.35, notch: 0.4, notchFraction: 0.62, notchLevel: 0.55, dicrotic: 0.04, runoff: 0.45 };

/** Value of one beat's waveform at time t (foot ≤ t < nextFoot). */
export function pulseValue(b: PulseBeat, shape: PulseShape, t: number): number {
  const L = b.nextFoot - b.foot;
  const u = t - b.foot;
  const tr = Math.min(shape.rise, shape.riseFraction * L);
  const tn = Math.max(tr + 0.02, Math.min(shape.notch, shape.notchFraction * L));
  const peak = b.base + b.amplitude;
  const notchValue = b.base + shape.notchLevel * b.amplitude;
  if (u < tr) return b.base + (b.amplitude * (1 - Math.cos((Math.PI * u) / tr))) / 2;
  if (u < tn) return peak - ((peak - notchValue) * (1 - Math.cos((Math.PI * (u - tr)) / (tn - tr)))) / 2;
  const span = L - tn;
  const e = Math.exp(-span / shape.runoff);
  const decay = (Math.exp(-(u - tn) / shape.runoff) - e) / (1 - e);
  const runoff = b.nextBase + (notchValue - b.nextBase) * decay;
  // Dicrotic wave, tapered to zero by the next foot so the foot stays the beat's minimum.
  const c = tn + Math.min(0.05, 0.25 * span);
  const sd = Math.min(0.03, 0.15 * span);
  const taper = Math.max(0, 1 - (u - tn) / span);
  const bump = shape.dicrotic * b.amplitude * Math.exp(-0.5 * ((u - c) / sd) ** 2) * taper * taper;
  return runoff + bump;
}

/**
 * Airway pressure of a volume-controlled breath at time u into a breath of length period: a
 * resistive step plus an elastic ramp to the peak; with an end-inspiratory pause (the last `pause`
 * seconds of inspiration, no flow) the resistive part falls away and the pressure rests at the
 * plateau (given, or the elastic part of the peak).
 */
export function airwayPressure(u: number, period: number, ti: number, peep: number, peak: number, pause = 0, plateau: number | null = null): number {
  const resistive = pause > 0 && plateau !== null ? peak - plateau : 0.3 * (peak - peep);
  const flowTime = Math.max(0.05, ti - pause);
  const elastic = peak - peep - resistive;
  if (u < flowTime) return peep + resistive * (1 - Math.exp(-u / 0.03)) + elastic * (u / flowTime);
  const atEnd = peep + resistive * (1 - Math.exp(-flowTime / 0.03)) + elastic;
  if (pause > 0 && u < ti) {
    // No flow: the resistive pressure decays within ~50 ms, leaving the plateau.
    return peep + elastic + (atEnd - peep - elastic) * Math.exp(-(u - flowTime) / 0.02);
  }
  const end = pause > 0 ? peep + elastic : atEnd;
  return peep + (end - peep) * Math.exp(-(u - ti) / 0.15);
}

/** CO2 partial pressure (mmHg) at time u into a breath: washed out in inspiration, rising in expiration. */
export function capnogram(u: number, ti: number, etco2: number): number {
  if (u < ti) return etco2 * Math.exp(-u / 0.06);
  const v = u - ti;
  return etco2 * (1 - Math.exp(-v / 0.12)) * (0.94 + 0.06 * Math.min(1, v / 2));
}
