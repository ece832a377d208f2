import type { ChannelRole, MonitorProfileInput } from '@ebbgate/shared';
import { SYNTHETIC_CHANNEL_CODES } from '@ebbgate/shared/synthetic';
import { WAVEFORM_CODES } from '../adapter/hl7/codes';
import type { ScenarioId } from './types';

/** Channel code a simulated monitor sends for a role: MDC reference ids over HTTP, OBX-3 codes over MLLP. */
export function channelCodesFor(transport: 'http' | 'mllp'): Record<ChannelRole, string> {
  if (transport === 'http') return { ...SYNTHETIC_CHANNEL_CODES };
  return { abp: WAVEFORM_CODES.abp.code, pleth: WAVEFORM_CODES.pleth.code, paw: WAVEFORM_CODES.paw.code, co2: WAVEFORM_CODES.co2.code };
}

const roles: ChannelRole[] = ['abp', 'pleth', 'paw', 'co2'];
const units: Record<ChannelRole, string> = { abp: 'mmHg', pleth: '1', paw: 'cmH2O', co2: 'mmHg' };

/**
 * The invented monitor model the simulator plays (contract with the demo seed: a profile that maps
 * every code below, for both transports). It deliberately lacks `EBB_RESP_IMPEDANCE`, which the
 * `unmapped-channel` scenario sends, so that monitor's batches land in the quarantine.
 */
export const DEMO_MONITOR_PROFILE: MonitorProfileInput = {
  name: 'Ebbgate demo: Larkspur Tidereader bedside monitor',
  manufacturer: 'Larkspur Instruments (invented)',
  model: 'Tidereader (invented)',
  transports: ['http', 'mllp'],
  channels: (['http', 'mllp'] as const).flatMap((t) =>
    roles.map((role) => ({ code: channelCodesFor(t)[role], label: `${role} (${t})`, role, unit: units[role], gain: 1, offset: 0, sampleRate: 125 })),
  ),
  defaultProbeSite: null, // each scenario's context names its probe site when it matters
  plethScaling: 'raw',
  notes: 'Simulated monitor of the Harrowmere demo; sends raw pleth with its DC level.',
};

export interface DemoMonitor {
  /** EUI-64 (16 hex digits), the IHE PCD-01 preferred identifier. */
  identifier: string;
  /** Bed id in config/demo/hospital.json, or null for a monitor not yet placed. */
  bedId: string | null;
  scenario: ScenarioId;
}

/** Suggested demo monitors: one per bed of the demo hospital, plus one with a profile gap. */
export const DEMO_MONITORS: DemoMonitor[] = [
  { identifier: '02EB6AFFFE000001', bedId: 'icu-01', scenario: 'fluid-responsive' },
  { identifier: '02EB6AFFFE000002', bedId: 'icu-02', scenario: 'not-responsive' },
  { identifier: '02EB6AFFFE000003', bedId: 'icu-03', scenario: 'atrial-fibrillation' },
  { identifier: '02EB6AFFFE000004', bedId: 'icu-04', scenario: 'spontaneous-breathing' },
  { identifier: '02EB6AFFFE000005', bedId: 'icu-05', scenario: 'low-tidal-volume' },
  { identifier: '02EB6AFFFE000006', bedId: 'or-01', scenario: 'motion-artefact' },
  { identifier: '02EB6AFFFE000007', bedId: 'or-02', scenario: 'damped-arterial-line' },
  { identifier: '02EB6AFFFE000008', bedId: 'or-03', scenario: 'vasopressor-finger-probe' },
  // A tidal volume challenge a newcomer sees within minutes: 6 → 8 mL/kg PBW for one minute, repeated.
  { identifier: '02EB6AFFFE000009', bedId: 'icu-06', scenario: 'tidal-volume-challenge-responder' },
  { identifier: '02EB6AFFFE00000A', bedId: 'icu-07', scenario: 'tidal-volume-challenge-non-responder' },
  // Numbered after the beds, as the gateway's demo seed numbers them (config/demo/hospital.json order).
  { identifier: '02EB6AFFFE00000B', bedId: null, scenario: 'unmapped-channel' },
];
