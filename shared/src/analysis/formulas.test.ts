import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { dampingCoefficient } from './arterial-line';
import { unitConversion } from './conditioning';
import { predictedBodyWeightKg, tidalVolumePerKg } from './pbw';
import { percentVariation } from './signal-utils';

const require = createRequire(import.meta.url);
// Independent reference for unit conversion: the UCUM library of the US National Library of Medicine.
const ucum = (
  require('@lhncbc/ucum-lhc') as { UcumLhcUtils: { getInstance(): { convertUnitTo(from: string, v: number, to: string): { toVal: number } } } }
).UcumLhcUtils.getInstance();

describe('published formulas, worked examples', () => {
  it('PPV: PPmax 50, PPmin 40 mmHg gives 22.2 % (Michard et al., Am J Respir Crit Care Med 2000)', () => {
    expect(percentVariation([50, 44, 40, 47])).toBeCloseTo((100 * 10) / 45, 10);
    expect(Math.round((percentVariation([50, 40]) as number) * 10) / 10).toBe(22.2);
  });
  it('ΔPOP uses the same max/min over mean form on pleth amplitudes (Cannesson et al., Crit Care 2005)', () => {
    // POPmax 1.2, POPmin 1.0 (any unit) → 100 × 0.2 / 1.1 = 18.18 %
    expect(percentVariation([1.0, 1.2, 1.1])).toBeCloseTo(18.1818, 3);
  });
  it('variation is not computable from fewer than two pulses', () => {
    expect(percentVariation([42])).toBeNull();
  });
  it('PBW male 50 + 0.91 × (cm − 152.4) (Devine; ARDSNet): 175 cm → 70.57 kg', () => {
    expect(predictedBodyWeightKg(175, 'male')).toBeCloseTo(70.566, 3);
  });
  it('PBW female 45.5 + 0.91 × (cm − 152.4) (Devine; ARDSNet): 160 cm → 52.42 kg', () => {
    expect(predictedBodyWeightKg(160, 'female')).toBeCloseTo(52.416, 3);
  });
  it('PBW agrees with the ARDSNet imperial form 50 + 2.3 kg per inch over 60 in (67 in male ≈ 66.1 kg; from memory)', () => {
    expect(predictedBodyWeightKg(67 * 2.54, 'male')).toBeCloseTo(50 + 2.3 * 7, 0);
  });
  it('tidal volume per kg PBW: 500 mL in a 175 cm man is 7.09 mL/kg, under the 8 mL/kg limit (Ann Intensive Care 2021)', () => {
    expect(tidalVolumePerKg(500, 175, 'male')).toBeCloseTo(7.0856, 3);
  });
  it('damping coefficient: AR 0.71 gives ζ ≈ 0.11 (Gardner, Anesthesiology 1981 worked example)', () => {
    expect(dampingCoefficient(0.71)).toBeCloseTo(0.11, 2);
  });
  it('unit conversion factors agree with UCUM (@lhncbc/ucum-lhc)', () => {
    const cases: [Parameters<typeof unitConversion>[0], string, string, string][] = [
      ['abp', 'kPa', 'kPa', 'mm[Hg]'],
      ['abp', 'cmH2O', 'cm[H2O]', 'mm[Hg]'],
      ['paw', 'mbar', 'mbar', 'cm[H2O]'],
      ['paw', 'kPa', 'kPa', 'cm[H2O]'],
      ['co2', 'kPa', 'kPa', 'mm[Hg]'],
    ];
    for (const [role, unit, ucumFrom, ucumTo] of cases) {
      const ours = unitConversion(role, unit).scale;
      const ref = ucum.convertUnitTo(ucumFrom, 1, ucumTo).toVal;
      expect(Math.abs(ours - ref) / ref).toBeLessThan(1e-5);
    }
  });
  it('an unknown unit is a clear input error', () => {
    expect(() => unitConversion('abp', 'furlongs')).toThrow(/unit "furlongs" is not understood for abp/);
  });
});
