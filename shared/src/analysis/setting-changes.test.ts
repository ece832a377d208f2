import { describe, expect, it } from 'vitest';
import { ventilatorSettingChanges } from './setting-changes';

// Truth is the contexts written here: a change is two consecutive batches giving different values.
describe('ventilator setting changes between the batches of a window', () => {
  it('names each setting that differs between consecutive batches, oldest first', () => {
    expect(
      ventilatorSettingChanges([
        { tidalVolumeMl: 429, setRespiratoryRate: 16, ventilationMode: 'controlled' },
        { tidalVolumeMl: 572, setRespiratoryRate: 16, ventilationMode: 'controlled' },
        { tidalVolumeMl: 572, setRespiratoryRate: 18, ventilationMode: 'unknown' },
      ]),
    ).toEqual(['tidal volume 429 → 572 mL', 'ventilation mode controlled → unknown', 'set rate 16 → 18 /min']);
  });

  it('is empty when nothing changed, and a setting left out of one batch (or a batch without context) is no change', () => {
    expect(ventilatorSettingChanges([{ tidalVolumeMl: 500 }, { tidalVolumeMl: 500, patientHeightCm: 170 }])).toEqual([]);
    expect(ventilatorSettingChanges([{ tidalVolumeMl: 500 }, { setRespiratoryRate: 14 }, undefined, { tidalVolumeMl: 500 }])).toEqual([]);
    expect(ventilatorSettingChanges([])).toEqual([]);
    // Checklist and patient items are not ventilator settings.
    expect(
      ventilatorSettingChanges([
        { openChest: false, patientHeightCm: 170 },
        { openChest: true, patientHeightCm: 171 },
      ]),
    ).toEqual([]);
  });
});
