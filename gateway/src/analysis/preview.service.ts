import type { AnalysisContext, PreviewResult, Waveform } from '@ebbgate/shared';
import {
  analyseWindow,
  AnalysisInputError,
  CaptureParseError,
  parseCsvCapture,
  roleForCode,
  type AnalysisChannel,
  type AnalysisInput,
} from '@ebbgate/shared/analysis';
import type { AppContext } from '../app-context';
import { MonitorProfileRow } from '../devices/device.entities';
import { toProfile } from '../devices/device-views';
import { HttpProblem, unprocessable } from '../http/problem';
import { mapChannels } from '../ingest/channel-mapping';
import { decodeJsonBatch, storedSamplesToFloat32, toStoredSamples, type ReceivedBatch } from '../ingest/decoded-batch';
import { decodePcd01 } from '../ingest/hl7/pcd01';
import { IngestRefusal } from '../ingest/refusal';
import { getSiteSettings } from '../settings/settings.service';

type Format = PreviewResult['parseReport']['format'];

function detectFormat(text: string, filename: string): Format {
  const head = text.replace(/^[\s\uFEFF\v]+/, '');
  if (head.startsWith('{') || /\.json$/i.test(filename)) return 'json';
  if (head.startsWith('MSH') || /\.hl7$/i.test(filename)) return 'hl7';
  return 'csv';
}

const DEFAULT_UNITS = { abp: 'mmHg', co2: 'mmHg', paw: 'cmH2O', pleth: '1' } as const;

/** Without a profile: the channel's own role, else the default MDC code map (code or REFID). */
function unprofiledChannels(batch: ReceivedBatch, warnings: string[]): { code: string; ch: AnalysisChannel }[] {
  const out: { code: string; ch: AnalysisChannel }[] = [];
  for (const c of batch.channels) {
    const role = c.role ?? [c.code, ...(c.altCodes ?? [])].map((x) => roleForCode(x)).find(Boolean) ?? null;
    if (!role) {
      warnings.push(`${c.path}: code ${c.code} has no role without a profile; skipped`);
      continue;
    }
    if (out.some((o) => o.ch.role === role)) {
      warnings.push(`${c.path}: a second ${role} channel (${c.code}) was skipped`);
      continue;
    }
    const unit = c.unit && !/^\d+\^/.test(c.unit) && !/^\d+$/.test(c.unit) ? c.unit : DEFAULT_UNITS[role];
    out.push({ code: c.code, ch: { role, sampleRate: c.sampleRate, unit, samples: storedSamplesToFloat32(toStoredSamples(c.samples, 1, 0)) } });
  }
  return out;
}

function toProblem(err: unknown): never {
  if (err instanceof IngestRefusal)
    throw new HttpProblem(err.kind === 'invalid' ? 400 : 422, err.kind === 'invalid' ? 'Bad request' : 'Unprocessable content', err.reason, {
      errors: err.errors.length ? err.errors : undefined,
    });
  if (err instanceof CaptureParseError)
    throw new HttpProblem(400, 'Bad request', `The CSV capture cannot be read: ${err.message}`, {
      errors: [{ path: `line ${err.line}`, message: err.message }],
    });
  if (err instanceof AnalysisInputError) throw unprocessable(`The capture cannot be analysed: ${err.message}`);
  throw err;
}

/**
 * The test bench: a capture and (optionally) a monitor profile in, the parse report and the full
 * analysis out. Nothing is stored: the capture may hold patient data.
 */
export async function previewCapture(ctx: AppContext, file: { buffer: Buffer; originalname: string }, profileId: string | undefined): Promise<PreviewResult> {
  const text = file.buffer.toString('utf8');
  const format = detectFormat(text, file.originalname);
  const warnings: string[] = [];
  const profileRow = profileId ? await ctx.ds.getRepository(MonitorProfileRow).findOneBy({ id: profileId }) : null;
  if (profileId && !profileRow) throw unprocessable('The profile does not exist.', [{ path: 'profileId', message: `no monitor profile ${profileId}` }]);
  const profile = profileRow ? toProfile(profileRow) : null;

  let input: AnalysisInput;
  let report: PreviewResult['parseReport']['channels'];
  try {
    if (format === 'csv') {
      input = parseCsvCapture(text);
      if (profile) warnings.push('CSV columns carry their roles and units; the profile was not applied');
      report = input.channels.map((c) => ({ code: c.role, role: c.role, unit: c.unit, sampleRate: c.sampleRate, samples: c.samples.length }));
    } else {
      const batch = format === 'json' ? decodeJsonBatch(file.buffer) : decodePcd01(file.buffer).batch;
      let chans: { code: string; ch: AnalysisChannel }[];
      if (profile) {
        const transport = format === 'json' ? 'http' : 'mllp';
        if (!profile.transports.includes(transport)) warnings.push(`profile "${profile.name}" does not list the ${transport} transport`);
        const mapped = mapChannels(
          batch,
          { id: 'preview', identifier: batch.monitorIdentifier, enabled: true, bedId: null, profile: { ...profile, transports: [transport] } },
          transport,
        );
        chans = [];
        for (const c of mapped) {
          if (chans.some((x) => x.ch.role === c.role)) warnings.push(`a second ${c.role} channel (${c.code}) was skipped`);
          else chans.push({ code: c.code, ch: { role: c.role, sampleRate: c.sampleRate, unit: c.unit, samples: storedSamplesToFloat32(c.samples) } });
        }
      } else chans = unprofiledChannels(batch, warnings);
      const profileCtx: AnalysisContext = profile
        ? { plethScaling: profile.plethScaling, ...(profile.defaultProbeSite ? { probeSite: profile.defaultProbeSite } : {}) }
        : {};
      input = { channels: chans.map((c) => c.ch), context: { ...profileCtx, ...(batch.context ?? {}) }, startTime: batch.startTime.toISOString() };
      report = chans.map((c) => ({ code: c.code, role: c.ch.role, unit: c.ch.unit, sampleRate: c.ch.sampleRate, samples: c.ch.samples.length }));
    }
    if (!input.channels.length) throw new AnalysisInputError('no channel with a known role');
    const site = (await getSiteSettings(ctx)).analysis;
    const analysis = analyseWindow(input, { cyclesToAverage: site.cyclesToAverage, bands: site.bands });
    const waveform: Waveform = {
      startTime: input.startTime ?? new Date(0).toISOString(),
      channels: input.channels.map((c) => ({
        role: c.role,
        unit: c.unit,
        sampleRate: c.sampleRate,
        samples: Array.from(c.samples, (v) => (Number.isFinite(v) ? v : null)),
      })),
    };
    return {
      parseReport: { format, profileId: profile?.id ?? null, channels: report, warnings },
      waveform,
      analysis: analysis as unknown as Record<string, unknown>,
    };
  } catch (err) {
    return toProblem(err);
  }
}
