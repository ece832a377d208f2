/**
 * Delivery test helpers: monitors, beds and assessments made with the real engine on synthetic
 * waveforms, stored the way the analysis worker stores them (row + hooks in one transaction).
 */
import { randomUUID } from 'node:crypto';
import type { DataSource, EntityManager } from 'typeorm';
import { startMockEhr, type RunningMockEhr } from '@ebbgate/mock-ehr';
import { analyzeWindow, type AnalysisContext, type AnalysisResult } from '@ebbgate/shared/analysis';
import { generateWindow, type SyntheticSpec } from '@ebbgate/shared/synthetic';
import { AssessmentRow } from '../../src/assessments/assessment.entity';
import { assessmentEvents } from '../../src/assessments/events';
import { buildDelivery, type DeliveryParts } from '../../src/delivery/delivery.module';
import { BedRow, MonitorRow } from '../../src/devices/device.entities';
import { startTestGateway, type TestGateway } from '../support/harness';

export const VENTILATED: AnalysisContext = { ventilationMode: 'controlled', tidalVolumeMl: 650, patientHeightCm: 175, patientSex: 'male', plethScaling: 'raw' };

const resultCache = new Map<string, AnalysisResult>();

/** An engine result for a synthetic window (cached per spec: the engine is deterministic). */
export function engineResult(spec: Partial<SyntheticSpec> = {}, context: AnalysisContext = VENTILATED): AnalysisResult {
  const key = JSON.stringify([spec, context]);
  let r = resultCache.get(key);
  if (!r) {
    const w = generateWindow({ seed: 21, heartRate: 80, respiratoryRate: 15, ppv: 14, channels: ['abp', 'pleth', 'paw'], durationSeconds: 30, ...spec });
    r = analyzeWindow({ channels: w.channels, context });
    resultCache.set(key, r);
  }
  return structuredClone(r);
}

export async function insertBedAndMonitor(ds: DataSource, locationIdentifier: string): Promise<{ bed: BedRow; monitor: MonitorRow }> {
  const now = new Date();
  const tag = randomUUID().slice(0, 8);
  const bed: BedRow = { id: randomUUID(), name: `bed ${locationIdentifier} ${tag}`, unit: 'ICU', locationIdentifier, createdAt: now, updatedAt: now };
  await ds.getRepository(BedRow).insert(bed);
  const monitor = {
    id: randomUUID(),
    identifier: `0223456789AB${tag.slice(0, 4).toUpperCase()}`,
    profileId: null,
    bedId: bed.id,
    enabled: true,
    lastSeenAt: null,
    dataRate: null,
    createdAt: now,
    updatedAt: now,
  } as MonitorRow;
  await ds.getRepository(MonitorRow).insert(monitor);
  return { bed, monitor };
}

/** Stores one assessment and runs the stored-hooks in the same transaction, as the analysis worker does. */
export async function storeAssessment(
  ds: DataSource,
  at: { bedId: string | null; monitorId: string },
  windowStart: Date,
  result: AnalysisResult = engineResult(),
  hooks = true,
  extra: Partial<AssessmentRow> = {},
): Promise<AssessmentRow> {
  const row: AssessmentRow = {
    id: randomUUID(),
    monitorId: at.monitorId,
    bedId: at.bedId,
    windowStart,
    windowEnd: new Date(windowStart.getTime() + 30_000),
    engineVersion: result.engineVersion,
    verdict: result.verdict,
    ppv: result.indices.ppv.value,
    spv: result.indices.spv.value,
    deltaPop: result.indices.deltaPop.value,
    perfusionIndex: result.indices.perfusionIndex.value,
    heartRate: result.indices.heartRate.value,
    respiratoryRate: result.indices.respiratoryRate.value,
    flags: result.flags.map((f) => f.code),
    result: { ...result, startTime: windowStart.toISOString() },
    enteredInErrorAt: null,
    enteredInErrorBy: null,
    enteredInErrorReason: null,
    createdAt: new Date(),
    ...extra,
  } as AssessmentRow;
  await ds.transaction(async (m: EntityManager) => {
    await m.getRepository(AssessmentRow).insert(row);
    if (hooks) for (const h of assessmentEvents(ds).stored) await h(m, row);
  });
  return row;
}

/** What the reviewer's mark-in-error does to the assessment, then the hooks (same transaction). */
export async function markInError(ds: DataSource, a: AssessmentRow, by: string, reason: string): Promise<void> {
  await ds.transaction(async (m) => {
    Object.assign(a, { enteredInErrorAt: new Date(), enteredInErrorBy: by, enteredInErrorReason: reason });
    await m.getRepository(AssessmentRow).save(a);
    for (const h of assessmentEvents(ds).markedInError) await h(m, a, reason);
  });
}

/**
 * Window starts for tests: an hour ago plus 30 s steps, so they fall inside the mock's seeded
 * encounters (started three hours before it came up). Each test uses its own monitor.
 */
const T0 = Math.floor((Date.now() - 3_600_000) / 1000) * 1000;
export function windowStart(i: number): Date {
  return new Date(T0 + i * 30_000);
}

/** Polls until the check holds, at most `ms` (bounded wait, not a timed assertion). */
export async function waitFor<T>(what: string, check: () => Promise<T | undefined | false>, ms = 20_000, every = 100): Promise<T> {
  const until = Date.now() + ms;
  for (;;) {
    const v = await check();
    if (v) return v;
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, every));
  }
}

export async function statusCounts(ds: DataSource): Promise<Record<string, number>> {
  const rows = (await ds.query('SELECT status, COUNT(*) AS c FROM delivery GROUP BY status')) as { status: string; c: string | number }[];
  return Object.fromEntries(rows.map((r) => [r.status, Number(r.c)]));
}

export interface MockAdmin {
  /** Any of the mock's /_admin endpoints (ADT events, quirks, HL7 and mail logs); the JSON answer, undefined for 204. */
  call(method: string, path: string, body?: object): Promise<unknown>;
  faults(rules: object[]): Promise<void>;
  clearFaults(): Promise<void>;
  observations(): Promise<{ total: number; byIdentifier: Record<string, number>; duplicated: string[] }>;
  mail(): Promise<{ subject: string; to: unknown; text?: string }[]>;
}

export function mockAdmin(baseUrl: string): MockAdmin {
  const call = async (method: string, path: string, body?: object) => {
    const res = await fetch(`${baseUrl}/_admin${path}`, {
      method,
      headers: { 'content-type': 'application/json' },
      body: body ? JSON.stringify(body) : undefined,
    });
    if (!res.ok) throw new Error(`${method} ${path}: ${res.status} ${await res.text()}`);
    return res.status === 204 ? undefined : res.json();
  };
  return {
    call,
    faults: async (rules) => void (await call('PUT', '/faults', { rules })),
    clearFaults: async () => void (await call('DELETE', '/faults')),
    observations: () => call('GET', '/observations') as Promise<Awaited<ReturnType<MockAdmin['observations']>>>,
    mail: () => call('GET', '/mail') as Promise<Awaited<ReturnType<MockAdmin['mail']>>>,
  };
}

/** A token from the mock EHR's client-credentials endpoint, to read back what the gateway wrote. */
export async function mockEhrToken(ehr: RunningMockEhr): Promise<string> {
  const res = await fetch(ehr.tokenUrl, {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
    body: 'grant_type=client_credentials&client_id=ebbgate-gateway&client_secret=mock-ehr-dev-secret',
  });
  if (!res.ok) throw new Error(`mock EHR token: ${res.status} ${await res.text()}`);
  return ((await res.json()) as { access_token: string }).access_token;
}

/** Delivery settings for suites where the gateway's own worker delivers: quick polls and retries, one row per request. */
export const QUICK_DELIVERY = {
  pollMs: 30,
  leaseSeconds: 5,
  requestTimeoutMs: 2000,
  bundleSize: 1,
  retry: { limit: 50, baseMs: 40, maxMs: 200 },
  patientContext: { cacheSeconds: 60, retrySeconds: 0.3 },
};

export interface DeliveryStack {
  ehr: RunningMockEhr;
  gw: TestGateway;
  admin: MockAdmin;
  stop(): Promise<void>;
}

/**
 * The mock EHR (FHIR with OAuth2, SMTP catcher, HL7 receiver, all on free ports) and a test
 * gateway whose EHR and mail settings point at it, with the suite's delivery settings on top
 * (a function of the mock, for its HL7 port). `services`: the gateway runs its outbox worker and
 * alert watcher itself; without, the suite drives the workers by hand.
 */
export async function startDeliveryStack(delivery: (ehr: RunningMockEhr) => object, opts: { services: boolean }): Promise<DeliveryStack> {
  const ehr = await startMockEhr({ httpPort: 0, smtpPort: 0, mllpPort: 0 });
  let gw: TestGateway;
  try {
    gw = await startTestGateway(
      { ehr: { fhirBaseUrl: ehr.fhirBaseUrl, tokenUrl: ehr.tokenUrl }, mail: { smtpPort: ehr.smtpPort }, delivery: delivery(ehr) },
      { services: opts.services },
    );
  } catch (err) {
    await ehr.stop();
    throw err;
  }
  return {
    ehr,
    gw,
    admin: mockAdmin(ehr.baseUrl),
    stop: async () => {
      await gw.stop();
      await ehr.stop();
    },
  };
}

/** Delivery parts for a suite that drives the workers by hand: the destinations started, the worker not. */
export async function handDrivenDelivery(gw: TestGateway): Promise<DeliveryParts> {
  const parts = buildDelivery(gw.ctx);
  await parts.services[0]!.start(); // destinations
  return parts;
}

/**
 * Runs the workers side by side until a round in which none of them handled a row, at most
 * `rounds` rounds (`pauseMs` between rounds); `mustDrain`: an outbox still busy after them is an error.
 */
export async function drainOutbox(workers: DeliveryParts['worker'][], opts: { rounds: number; pauseMs?: number; mustDrain?: boolean }): Promise<void> {
  for (let round = 0; round < opts.rounds; round++) {
    const handled = await Promise.all(workers.map((w) => w.runOnce()));
    if (handled.every((n) => n === 0)) return;
    if (opts.pauseMs) await new Promise((r) => setTimeout(r, opts.pauseMs));
  }
  if (opts.mustDrain) throw new Error(`outbox did not drain in ${opts.rounds} rounds`);
}
