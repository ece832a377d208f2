import { describe, expect, it } from 'vitest';
import { curveSlope, DEMO_VENTRICLE, endDiastolicVolume, respiratorySwing, strokeVolume } from './frank-starling';

describe('Frank–Starling operating point (exponential EDPVR + linear ESPVR)', () => {
  it('inverts the EDPVR: EDP = A(exp(β(EDV − V0)) − 1) at the volume it returns', () => {
    for (const edp of [2, 6, 12, 20]) {
      const edv = endDiastolicVolume(DEMO_VENTRICLE, edp);
      expect(DEMO_VENTRICLE.a * (Math.exp(DEMO_VENTRICLE.beta * (edv - DEMO_VENTRICLE.v0)) - 1)).toBeCloseTo(edp, 9);
    }
  });

  it('is saturating: stroke volume rises with preload while the slope falls (Frank–Starling law)', () => {
    const edps = [2, 4, 8, 12, 16, 20];
    const sv = edps.map((e) => strokeVolume(DEMO_VENTRICLE, e));
    const slope = edps.map((e) => curveSlope(DEMO_VENTRICLE, e));
    for (let i = 1; i < edps.length; i++) {
      expect(sv[i]).toBeGreaterThan(sv[i - 1]);
      expect(slope[i]).toBeLessThan(slope[i - 1]);
    }
    // The slope is the derivative: compare with a central difference.
    const h = 1e-4;
    expect(curveSlope(DEMO_VENTRICLE, 6)).toBeCloseTo((strokeVolume(DEMO_VENTRICLE, 6 + h) - strokeVolume(DEMO_VENTRICLE, 6 - h)) / (2 * h), 4);
  });

  it('gives responder-sized PPV on the steep part and non-responder-sized PPV on the flat part', () => {
    // Michard 2000 (domain notes): responders 24 ± 9 %, non-responders 7 ± 3 %; threshold 13 %.
    expect(respiratorySwing({ edp: 4, tidalVolumeMlPerKg: 8 }).ppv).toBeGreaterThan(13);
    expect(respiratorySwing({ edp: 12, tidalVolumeMlPerKg: 8 }).ppv).toBeLessThan(9);
  });

  it('shrinks the swing with a smaller breath (low tidal volume gives false negatives, Ann Intensive Care 2016)', () => {
    const big = respiratorySwing({ edp: 4, tidalVolumeMlPerKg: 8 }).ppv;
    const small = respiratorySwing({ edp: 4, tidalVolumeMlPerKg: 5 }).ppv;
    expect(small).toBeLessThan(big);
    expect(small / big).toBeCloseTo(5 / 8, 1);
  });
});
