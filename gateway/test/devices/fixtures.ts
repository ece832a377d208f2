import type { MonitorProfileInput } from '@ebbgate/shared';
import type { SignedInClient } from '../support/harness';

/** An invented monitor model (not a real product): arterial pressure and pleth at 125 Hz. */
export const corvaneProfile = (name = 'Corvane Wayfarer (test)'): MonitorProfileInput => ({
  name,
  manufacturer: 'Corvane Instruments',
  model: 'Wayfarer',
  transports: ['http', 'mllp'],
  channels: [
    // 150036 = MDC_PRESS_BLD_ART_ABP (IEEE 11073-10101 nomenclature, confirmed).
    { code: '150036', label: 'Arterial pressure', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125 },
    { code: 'MDC_PRESS_BLD_ART_ABP', role: 'abp', unit: 'mmHg', gain: 1, offset: 0, sampleRate: 125 },
    // 150452 = MDC_PULS_OXIM_PLETH (IEEE 11073-10101, from published code tables, not re-checked).
    { code: '150452', label: 'Pleth', role: 'pleth', unit: '1', gain: 1, offset: 0, sampleRate: 125 },
    { code: 'MDC_PULS_OXIM_PLETH', role: 'pleth', unit: '1', gain: 1, offset: 0, sampleRate: 125 },
    { code: 'MDC_PRESS_AWAY', role: 'paw', unit: 'cmH2O', gain: 1, offset: 0, sampleRate: 125 },
    { code: 'PAW-RAW', label: 'airway pressure in adapter counts', role: 'paw', unit: 'cmH2O', gain: 0.01, offset: -5, sampleRate: 125 },
  ],
  defaultProbeSite: 'finger',
  plethScaling: 'raw',
  notes: 'invented model for tests',
});

/** Creates a profile and a monitor with an API key; returns their ids and the key. */
export async function registerMonitor(integrator: SignedInClient, identifier: string, profile = corvaneProfile(`Corvane Wayfarer ${identifier}`)) {
  const p = await integrator.post('/api/v1/profiles', profile);
  if (p.status !== 201) throw new Error(`profile: ${p.status} ${JSON.stringify(p.body)}`);
  const m = await integrator.post('/api/v1/monitors', { identifier, profileId: p.body.id });
  if (m.status !== 201) throw new Error(`monitor: ${m.status} ${JSON.stringify(m.body)}`);
  const k = await integrator.post(`/api/v1/monitors/${m.body.id}/api-key`);
  if (k.status !== 201) throw new Error(`key: ${k.status} ${JSON.stringify(k.body)}`);
  return { profileId: p.body.id as string, monitorId: m.body.id as string, apiKey: k.body.apiKey as string };
}
