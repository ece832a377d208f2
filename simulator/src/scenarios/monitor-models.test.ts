import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { SCENARIOS } from './catalogue';
import { DEMO_MONITOR_PROFILE, DEMO_MONITORS } from './monitor-models';

interface HospitalBed {
  id: string;
  patient?: { heightCm: number; sex: string };
}
const hospital = JSON.parse(readFileSync(new URL('../../../config/demo/hospital.json', import.meta.url), 'utf8')) as { beds: HospitalBed[] };

describe('demo monitors', () => {
  it('use locally administered unicast EUI-64 identifiers, never an organisation prefix', () => {
    // IEEE Std 802-2014 §8.2 / RFC 7042 §2.1: bit 0x02 of the first octet set = locally
    // administered (U/L), bit 0x01 clear = individual (I/G).
    for (const m of DEMO_MONITORS) {
      expect(m.identifier).toMatch(/^[0-9A-F]{16}$/);
      const first = parseInt(m.identifier.slice(0, 2), 16);
      expect(first & 0x02).toBe(0x02);
      expect(first & 0x01).toBe(0);
    }
  });

  it('name an invented model without a maker-style letters-and-number code', () => {
    for (const s of [DEMO_MONITOR_PROFILE.name, DEMO_MONITOR_PROFILE.model]) expect(s).not.toMatch(/\b[A-Z]{1,3}-?\d+\b/);
    expect(DEMO_MONITOR_PROFILE.manufacturer).toContain('(invented)');
  });

  it('put one monitor in each bed of the demo hospital, numbered in the file order the gateway seed uses, the unplaced one last', () => {
    expect(DEMO_MONITORS.map((m) => m.bedId)).toEqual([...hospital.beds.map((b) => b.id), null]);
    DEMO_MONITORS.forEach((m, i) => expect(m.identifier).toBe(`02EB6AFFFE${(i + 1).toString(16).toUpperCase().padStart(6, '0')}`));
  });

  it('run both tidal volume challenge scenarios in a bed, each on a patient the EHR knows with the same height and sex', () => {
    for (const id of ['tidal-volume-challenge-responder', 'tidal-volume-challenge-non-responder'] as const) {
      const m = DEMO_MONITORS.find((x) => x.scenario === id);
      expect(m?.bedId, id).toBeTruthy();
      const patient = hospital.beds.find((b) => b.id === m!.bedId)?.patient;
      expect(patient, id).toBeDefined();
      expect(patient!.heightCm).toBe(SCENARIOS[id].patient.heightCm);
      expect(patient!.sex).toBe(SCENARIOS[id].patient.sex);
    }
  });
});
