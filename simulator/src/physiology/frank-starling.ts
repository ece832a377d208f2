/**
 * Where a simulated patient sits on the Frank–Starling curve, and the respiratory pulse-pressure
 * swing that follows from it.
 *
 * Model (a textbook ventricle, parameters invented for the demo and "from memory" in size):
 *  - end-diastolic pressure–volume relation, exponential: EDP = A·(exp(β·(EDV − V0)) − 1)
 *    (the usual EDPVR form, e.g. Klotz et al., Am J Physiol Heart 2006);
 *  - end-systolic pressure–volume relation, linear: Pes = Ees·(ESV − V0)
 *    (time-varying elastance, Suga & Sagawa, Circ Res 1974);
 *  - so stroke volume SV(EDP) = EDV − ESV = ln(1 + EDP/A)/β − Pes/Ees: a saturating curve, steep at
 *    low filling pressure and flat at high;
 *  - a positive-pressure breath moves preload by ΔEDP (peak to trough) proportional to the tidal
 *    volume per kg predicted body weight; the swing in SV is read off the curve at the operating point;
 *  - pulse pressure ∝ stroke volume (two-element Windkessel, PP ≈ SV / C; Westerhof et al., Med Biol
 *    Eng Comput 2009, review), so PPV % = 100·(SVmax − SVmin) / mean(SVmax, SVmin).
 */
export interface Ventricle {
  /** EDPVR scale, mmHg. */
  a: number;
  /** EDPVR stiffness, 1/mL. */
  beta: number;
  /** End-systolic elastance, mmHg/mL. */
  ees: number;
  /** End-systolic pressure, mmHg. */
  pes: number;
  /** Unstressed volume, mL. */
  v0: number;
}

export const DEMO_VENTRICLE: Ventricle = { a: 0.42, beta: 0.0292, ees: 2.5, pes: 100, v0: 10 };

/** Preload swing per mL/kg PBW of tidal volume, mmHg (calibrated so 8 mL/kg at EDP 4 gives PPV ≈ 18 %). */
export const PRELOAD_SWING_PER_ML_KG = 0.116;

/** Arterial compliance of the Windkessel, mL/mmHg (PP = SV / C). */
export const ARTERIAL_COMPLIANCE = 1.2;

export function endDiastolicVolume(v: Ventricle, edp: number): number {
  return v.v0 + Math.log(1 + edp / v.a) / v.beta;
}

export function strokeVolume(v: Ventricle, edp: number): number {
  return endDiastolicVolume(v, edp) - (v.v0 + v.pes / v.ees);
}

/** dSV/dEDP, mL/mmHg: the slope of the curve at the operating point. */
export function curveSlope(v: Ventricle, edp: number): number {
  return 1 / (v.beta * (v.a + edp));
}

export interface OperatingPoint {
  /** Mean end-diastolic pressure, mmHg (the position on the curve). */
  edp: number;
  /** Tidal volume per kg predicted body weight, mL/kg. */
  tidalVolumeMlPerKg: number;
}

export interface RespiratorySwing {
  strokeVolume: number;
  slope: number;
  preloadSwing: number;
  /** % — the continuous PP swing the generator is given. */
  ppv: number;
  /** Mean pulse pressure, mmHg. */
  meanPp: number;
}

/** The swing a breath of this size produces at this point on the curve. */
export function respiratorySwing(p: OperatingPoint, v: Ventricle = DEMO_VENTRICLE): RespiratorySwing {
  const preloadSwing = PRELOAD_SWING_PER_ML_KG * p.tidalVolumeMlPerKg;
  const hi = strokeVolume(v, p.edp + preloadSwing / 2);
  const lo = strokeVolume(v, p.edp - preloadSwing / 2);
  const sv = strokeVolume(v, p.edp);
  return { strokeVolume: sv, slope: curveSlope(v, p.edp), preloadSwing, ppv: (100 * (hi - lo)) / ((hi + lo) / 2), meanPp: sv / ARTERIAL_COMPLIANCE };
}
