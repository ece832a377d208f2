import type { ChannelRole, MonitorProfile } from '@ebbgate/shared';
import type { MonitorForIngest } from '../devices/device-cache';
import { sampleCount, toStoredSamples, type ReceivedBatch } from './decoded-batch';
import { IngestRefusal } from './refusal';

/** A channel ready for storage: physical unit, role from the profile, float32 bytes. */
export interface MappedChannel {
  code: string;
  role: ChannelRole;
  unit: string;
  sampleRate: number;
  gain: number;
  offset: number;
  sampleCount: number;
  samples: Buffer;
}

const normalise = (code: string) => code.trim().toUpperCase();

/** Finds the profile channel for an inbound code: exact code, case-insensitive. */
export function profileChannelFor(profile: MonitorProfile, code: string) {
  const c = normalise(code);
  return profile.channels.find((p) => normalise(p.code) === c);
}

/**
 * Applies the monitor's profile: code → role, unit and scaling; checks the declared sample rate.
 * Every problem is named (422 / quarantine) so an integrator can fix the profile and reprocess.
 */
export function mapChannels(batch: ReceivedBatch, monitor: MonitorForIngest | null, transport: 'http' | 'mllp'): MappedChannel[] {
  if (!monitor)
    throw new IngestRefusal('unmapped', `No monitor is registered with identifier ${batch.monitorIdentifier}.`, [
      { path: 'monitorId', message: 'unknown monitor' },
    ]);
  if (!monitor.enabled) throw new IngestRefusal('unmapped', `Monitor ${monitor.identifier} is disabled.`, [{ path: 'monitorId', message: 'monitor disabled' }]);
  const profile = monitor.profile;
  if (!profile)
    throw new IngestRefusal('unmapped', `Monitor ${monitor.identifier} has no monitor profile, so its channel codes cannot be mapped.`, [
      { path: 'monitorId', message: 'no profile assigned' },
    ]);
  if (!profile.transports.includes(transport)) {
    throw new IngestRefusal('unmapped', `Profile "${profile.name}" does not list the ${transport} transport.`, [
      { path: 'transport', message: `not in profile transports (${profile.transports.join(', ')})` },
    ]);
  }
  const errors: { path: string; message: string }[] = [];
  const mapped: MappedChannel[] = [];
  for (const ch of batch.channels) {
    const p = [ch.code, ...(ch.altCodes ?? [])].map((c) => profileChannelFor(profile, c)).find(Boolean);
    if (!p) {
      errors.push({ path: `${ch.path}.code`, message: `code ${ch.code} is not in profile "${profile.name}"` });
      continue;
    }
    if (Math.abs(p.sampleRate - ch.sampleRate) > 1e-6 * p.sampleRate) {
      errors.push({ path: `${ch.path}.sampleRate`, message: `${ch.sampleRate} /s, but profile "${profile.name}" declares ${p.sampleRate} /s for ${p.code}` });
      continue;
    }
    const n = sampleCount(ch.samples);
    mapped.push({
      code: p.code,
      role: p.role,
      unit: p.unit,
      sampleRate: p.sampleRate,
      gain: p.gain,
      offset: p.offset,
      sampleCount: n,
      samples: toStoredSamples(ch.samples, p.gain, p.offset),
    });
  }
  if (errors.length) throw new IngestRefusal('unmapped', 'Some channels do not match the monitor profile.', errors);
  return mapped;
}
