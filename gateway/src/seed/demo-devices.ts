/**
 * Demo devices for `npm start`: invented monitor models (no real vendor), the beds of the invented
 * Harrowmere General Hospital (config/demo/hospital.json) and one monitor per bed. Idempotent:
 * what exists already is kept. The lead calls this after migrations; the simulator then asks
 * for an API key per returned monitor.
 */
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import type { DataSource } from 'typeorm';
import type { ChannelRole, MonitorProfileInput } from '@ebbgate/shared';
import { repoRoot } from '../config/load';
import { BedRow, MonitorProfileRow, MonitorRow } from '../devices/device.entities';
import { createBed } from '../devices/beds.service';
import { createMonitor } from '../devices/monitors.service';
import { createProfile } from '../devices/profiles.service';

const UNITS: Record<ChannelRole, string> = { abp: 'mmHg', pleth: '1', paw: 'cmH2O', co2: 'mmHg' };
const ch = (code: string, role: ChannelRole, label: string) => ({ code, label, role, unit: UNITS[role], gain: 1, offset: 0, sampleRate: 125 });

/**
 * The model the bedside simulator plays: it must map every code the simulator sends over both
 * transports (simulator/src/scenarios/monitor-models.ts, DEMO_MONITOR_PROFILE), and lack the
 * impedance channel of its `unmapped-channel` scenario so that one lands in the quarantine.
 */
export const LARKSPUR_PROFILE: MonitorProfileInput = {
  name: 'Ebbgate demo: Larkspur Tidereader bedside monitor',
  manufacturer: 'Larkspur Instruments (invented)',
  model: 'Tidereader (invented)',
  transports: ['http', 'mllp'],
  channels: [
    ch('MDC_PRESS_BLD_ART_ABP', 'abp', 'abp (http)'),
    ch('MDC_PULS_OXIM_PLETH', 'pleth', 'pleth (http)'),
    ch('MDC_PRESS_AWAY', 'paw', 'paw (http)'),
    ch('MDC_AWAY_CO2', 'co2', 'co2 (http)'),
    ch('150036', 'abp', 'abp (mllp)'),
    ch('150452', 'pleth', 'pleth (mllp)'),
    ch('EBB_PRESS_AWAY', 'paw', 'paw (mllp)'),
    ch('EBB_AWAY_CO2', 'co2', 'co2 (mllp)'),
  ],
  defaultProbeSite: null,
  plethScaling: 'raw',
  notes: 'Simulated monitor of the Harrowmere demo; sends raw pleth with its DC level.',
};

/** Two more invented models, for the integrator to look at and assign. */
export const OTHER_DEMO_PROFILES: MonitorProfileInput[] = [
  {
    name: 'Ebbgate demo: Corvane Stretcherwatch transport monitor',
    manufacturer: 'Corvane Instruments (invented)',
    model: 'Stretcherwatch (invented)',
    transports: ['http'],
    channels: [
      ch('MDC_PRESS_BLD_ART_ABP', 'abp', 'arterial pressure'),
      { ...ch('CVN-PLETH', 'pleth', 'pleth, display-normalised'), builtInFiltering: 'display smoothing, 0.5–5 Hz' },
    ],
    defaultProbeSite: 'finger',
    plethScaling: 'auto-scaled',
    notes: 'Pleth comes auto-scaled (no perfusion index); the adapter sends arterial pressure in mmHg.',
  },
  {
    name: 'Ebbgate demo: Tessaly Quietdial anaesthesia monitor',
    manufacturer: 'Tessaly Medical (invented)',
    model: 'Quietdial (invented)',
    transports: ['mllp'],
    channels: [
      ch('150036', 'abp', 'arterial pressure'),
      ch('150452', 'pleth', 'pleth'),
      { ...ch('TSL-PAW-COUNTS', 'paw', 'airway pressure in ADC counts'), gain: 0.02, offset: -10 },
    ],
    defaultProbeSite: 'ear',
    plethScaling: 'raw',
    notes: 'Airway pressure arrives in ADC counts: physical cmH2O = 0.02 × counts − 10.',
  },
];

interface HospitalBed {
  id: string;
  name: string;
  unit: string;
  locationIdentifier: string;
}

const FALLBACK_BEDS: HospitalBed[] = [
  { id: 'icu-01', name: 'ICU bed 1', unit: 'ICU', locationIdentifier: 'ICU-01' },
  { id: 'icu-02', name: 'ICU bed 2', unit: 'ICU', locationIdentifier: 'ICU-02' },
  { id: 'or-01', name: 'Theatre 1', unit: 'THEATRES', locationIdentifier: 'OR-01' },
];

function demoBeds(): HospitalBed[] {
  const file = path.join(repoRoot, 'config/demo/hospital.json');
  if (!existsSync(file)) return FALLBACK_BEDS;
  const data = JSON.parse(readFileSync(file, 'utf8')) as { beds?: HospitalBed[] };
  return data.beds?.length ? data.beds : FALLBACK_BEDS;
}

/** EUI-64 of the n-th demo monitor (1-based), as the simulator's monitor list expects: first octet 02, the locally administered (U/L) bit set, so no registered organisation prefix is borrowed. */
export const demoMonitorIdentifier = (n: number) => `02EB6AFFFE${n.toString(16).toUpperCase().padStart(6, '0')}`;

export interface SeededMonitor {
  id: string;
  identifier: string;
  bedId: string | null;
  profileId: string;
}

async function ensureProfile(ds: DataSource, p: MonitorProfileInput): Promise<string> {
  const existing = await ds.getRepository(MonitorProfileRow).findOneBy({ name: p.name });
  return existing ? existing.id : (await createProfile(ds, p, { principal: undefined })).id;
}

export async function seedDemoDevices(ds: DataSource): Promise<SeededMonitor[]> {
  const larkspur = await ensureProfile(ds, LARKSPUR_PROFILE);
  for (const p of OTHER_DEMO_PROFILES) await ensureProfile(ds, p);
  const beds = demoBeds();
  const slots: { bedId: string | null }[] = [];
  for (const b of beds) {
    if (!(await ds.getRepository(BedRow).existsBy({ id: b.id })))
      await createBed(ds, { id: b.id, name: b.name, unit: b.unit, locationIdentifier: b.locationIdentifier }, { principal: undefined });
    slots.push({ bedId: b.id });
  }
  slots.push({ bedId: null }); // one monitor not yet placed in a bed
  const out: SeededMonitor[] = [];
  for (const [i, slot] of slots.entries()) {
    const identifier = demoMonitorIdentifier(i + 1);
    let row = await ds.getRepository(MonitorRow).findOneBy({ identifier });
    if (!row) {
      const bedTaken = slot.bedId ? await ds.getRepository(MonitorRow).existsBy({ bedId: slot.bedId }) : false;
      const m = await createMonitor(ds, { identifier, profileId: larkspur, bedId: bedTaken ? null : slot.bedId }, { principal: undefined });
      row = (await ds.getRepository(MonitorRow).findOneByOrFail({ id: m.id })) as MonitorRow;
    }
    out.push({ id: row.id, identifier: row.identifier, bedId: row.bedId, profileId: row.profileId ?? larkspur });
  }
  return out;
}

/** Demo names and ids of earlier versions, and what they are now (so an existing demo database keeps working). */
const RETIRED_PROFILE_NAMES: Record<string, string> = {
  'Ebbgate demo: Larkspur BM-40 bedside monitor': LARKSPUR_PROFILE.name,
  'Ebbgate demo: Corvane BX-7 transport monitor': OTHER_DEMO_PROFILES[0]!.name,
  'Ebbgate demo: Tessaly PM-3 anaesthesia monitor': OTHER_DEMO_PROFILES[1]!.name,
};
const RETIRED_MONITOR_PREFIX = '00A0B1FFFE';

/**
 * Brings a demo database made before the demo data were renamed up to date: the three demo
 * profiles take their invented names, demo monitors their locally administered EUI-64. Only rows
 * that carry exactly the old demo values change; nothing else is touched. Returns the rows changed.
 */
export async function upgradeDemoData(ds: DataSource): Promise<number> {
  let changed = 0;
  for (const [old, now] of Object.entries(RETIRED_PROFILE_NAMES)) {
    const model = [LARKSPUR_PROFILE, ...OTHER_DEMO_PROFILES].find((p) => p.name === now)!;
    const r = (await ds.query(
      'UPDATE monitor_profile SET name = ?, model = ?, manufacturer = ? WHERE name = ? AND NOT EXISTS (SELECT 1 FROM (SELECT id FROM monitor_profile WHERE name = ?) x)',
      [now, model.model, model.manufacturer, old, now],
    )) as { affectedRows: number };
    changed += r.affectedRows;
  }
  for (let n = 1; n <= 16; n++) {
    const old = `${RETIRED_MONITOR_PREFIX}${n.toString(16).toUpperCase().padStart(6, '0')}`;
    const r = (await ds.query(
      'UPDATE monitor SET identifier = ? WHERE identifier = ? AND NOT EXISTS (SELECT 1 FROM (SELECT id FROM monitor WHERE identifier = ?) x)',
      [demoMonitorIdentifier(n), old, demoMonitorIdentifier(n)],
    )) as { affectedRows: number };
    changed += r.affectedRows;
  }
  return changed;
}
