/**
 * The demo scenario behind `npm start`: every monitor of the invented Harrowmere General Hospital
 * streams its patient through the adapter client; the last minute is sent at once (backfill) so
 * assessments appear within seconds, then batches follow in real time; at a set time the mock EHR
 * starts failing (one refusal, then an outage) and recovers later.
 */
import { BatchSender, type SenderEvent } from './adapter/batch-sender';
import { DEMO_MONITORS } from './scenarios/monitor-models';
import { EHR_OUTAGE, SCENARIOS } from './scenarios/catalogue';
import type { Scenario, ScenarioId } from './scenarios/types';
import { MonitorFeed } from './simulation/monitor-feed';
import { simulatorTransport } from './simulation/transports';
import { simulatedClock } from './simulation/sim-clock';
import { BedStream, type ChallengeTruth } from './stream/bed-stream';

import type { DemoMonitorInput } from './simulation/demo-provision';

export { provisionDemoMonitors, type DemoMonitorInput } from './simulation/demo-provision';

export interface DemoOptions {
  gatewayUrl: string;
  mockEhrUrl: string;
  monitors: DemoMonitorInput[];
  transport?: 'http' | 'mllp';
  mllpPort?: number;
  /** Batch length, s (default 5). */
  intervalSeconds?: number;
  spoolDir: string;
  log?: (m: string) => void;
  /** Seconds of past signal sent at start (default 60). */
  backfillSeconds?: number;
  /**
   * How fast the backfill plays, times real time (default: at once). Batch times stay simulated
   * times and never pass the wall clock: once caught up the run goes on in real time. With a long
   * backfill this plays a tidal volume challenge (three minutes of signal) in a few seconds.
   */
  speed?: number;
  /** EHR outage timing, or false for none (default: EHR_OUTAGE of the scenario catalogue). */
  ehrOutage?: false | { atSeconds: number; durationSeconds: number; refusalWaitSeconds?: number };
  /** ADT-style changes recorded at the mock EHR during the run, or false for none (default: DEMO_ADT). */
  adt?: false | typeof DEMO_ADT;
}

/**
 * The demo's bed changes (config/demo/hospital.json): the ICU-03 patient is transferred to the
 * free ICU-05, later the OR-02 patient is discharged and a new (invented) patient admitted there.
 * The monitors stay at their beds, so ICU-03's results then wait for a patient, OR-02's go to
 * the new one, and nothing from before a change is filed to whoever came after.
 */
export const DEMO_ADT = {
  transfer: { atSeconds: 150, from: 'ICU-03', to: 'ICU-05' },
  dischargeAdmit: {
    atSeconds: 240,
    location: 'OR-02',
    admitAfterSeconds: 30,
    patient: { mrn: 'HGH-400877', family: 'Wrenfield-Moss', given: ['Tamsin'], sex: 'female' as const, birthDate: '1967-09-21' },
  },
};

export interface RunningDemo {
  stop(): Promise<void>;
  /** Resolves once the sender is open and the backfill is queued. */
  ready: Promise<void>;
  /** Scenario per monitor identifier, as assigned. */
  assignments: Map<string, ScenarioId>;
  /**
   * The tidal volume challenges streamed so far (challenge scenarios), at their simulated times,
   * with the generator's truth: what a correct engine must find, never taken from the gateway.
   */
  challenges(identifier: string): StreamedChallenge[];
}

/** A tidal volume challenge as the simulator put it in: low volume from `startAt`, the step at `stepAt`. */
export interface StreamedChallenge {
  startAt: Date;
  stepAt: Date;
  truth: ChallengeTruth['truth'];
}

/** Scenario for a monitor: its own choice, else the suggested demo list, else round-robin over that list. */
export function assignScenario(m: DemoMonitorInput, index: number): Scenario {
  if (m.scenario) {
    const s = SCENARIOS[m.scenario as ScenarioId];
    if (!s) throw new Error(`unknown scenario "${m.scenario}" for monitor ${m.identifier}; known: ${Object.keys(SCENARIOS).join(', ')}`);
    return s;
  }
  const known = DEMO_MONITORS.find((d) => d.identifier === m.identifier);
  return SCENARIOS[known?.scenario ?? DEMO_MONITORS[index % DEMO_MONITORS.length].scenario];
}

export function runDemoScenario(opts: DemoOptions): RunningDemo {
  const log = opts.log ?? (() => {});
  const batchSeconds = opts.intervalSeconds ?? 5;
  const transport = opts.transport ?? 'http';
  const backfill = opts.backfillSeconds ?? 60;
  const now = Date.now();
  // Aligned to whole batch lengths, like a monitor that cuts batches on the clock.
  const start = new Date(Math.floor((now - backfill * 1000) / (batchSeconds * 1000)) * batchSeconds * 1000);
  const clock = simulatedClock(start.getTime(), opts.speed);
  const scenarios = new Map<string, Scenario>();
  const streams = new Map<string, BedStream>();
  const feeds = opts.monitors.map((m, i) => {
    const scenario = assignScenario(m, i);
    scenarios.set(m.identifier, scenario);
    const source = new BedStream({ scenario, seed: 1000 + i * 17 });
    streams.set(m.identifier, source);
    return new MonitorFeed({
      identifier: m.identifier,
      scenario,
      source,
      transport,
      batchSeconds,
      startTime: start,
    });
  });
  const challengesOf = (identifier: string): StreamedChallenge[] =>
    (streams.get(identifier)?.challengeTruth() ?? []).map((c) => ({
      startAt: new Date(start.getTime() + c.startTime * 1000),
      stepAt: new Date(start.getTime() + c.stepTime * 1000),
      truth: c.truth,
    }));
  const announced = new Map<string, number>();
  const apiKeys = new Map(opts.monitors.map((m) => [m.identifier, m.apiKey]));
  const timers: NodeJS.Timeout[] = [];
  let stopped = false;
  let faultsOn = false;
  let sender: BatchSender | null = null;
  const onEvent = eventLogger(log, scenarios);

  const ready = (async () => {
    sender = await BatchSender.open({
      transport: simulatorTransport({ transport, gatewayUrl: opts.gatewayUrl, apiKeys, mllpPort: opts.mllpPort, scenarioOf: (id) => scenarios.get(id) }),
      spoolDir: opts.spoolDir,
      onEvent,
    });
    const pace =
      opts.speed === undefined || opts.speed === Number.POSITIVE_INFINITY ? 'at once' : `at ${opts.speed}× real time (${Math.ceil(clock.catchUpSeconds())} s)`;
    log(`${feeds.length} monitors over ${transport}, ${batchSeconds}-s batches, backfilling ${backfill} s ${pace}`);
    for (const f of feeds) log(`${f.identifier} → ${f.scenario.id} (${f.scenario.title})`);
    await tick();
    if (stopped) return;
    timers.push(setInterval(() => void tick().catch((err) => log(`${String(err)}`)), 250));
    const outage = opts.ehrOutage === undefined ? EHR_OUTAGE : opts.ehrOutage;
    if (outage) {
      const begin = async () => {
        await putFaults(EHR_OUTAGE.refusalRules, 'EHR refuses the next Observation posts (mock EHR: 422)');
        await refusalsUsed(outage.refusalWaitSeconds ?? EHR_OUTAGE.refusalWaitSeconds);
        if (stopped) return;
        await putFaults(EHR_OUTAGE.outageRules, 'EHR outage begins (mock EHR: 503 with Retry-After for everything)');
        // The outage lasts its full duration from the moment the faults are on.
        timers.push(setTimeout(() => void clearFaults().catch((e) => log(`could not end the EHR outage: ${String(e)}`)), outage.durationSeconds * 1000));
      };
      timers.push(setTimeout(() => void begin().catch((e) => log(`could not start the EHR outage: ${String(e)}`)), outage.atSeconds * 1000));
    }
    const adt = opts.adt === undefined ? DEMO_ADT : opts.adt;
    if (adt) {
      const post = async (p: string, body: object, message: string) => {
        if (stopped) return;
        const res = await fetch(new URL(`/_admin/adt/${p}`, opts.mockEhrUrl), {
          method: 'POST',
          headers: { 'content-type': 'application/json' },
          body: JSON.stringify(body),
        });
        if (!res.ok) throw new Error(`mock EHR answered ${res.status} to ${p}: ${await res.text()}`);
        log(message);
      };
      const t = adt.transfer;
      timers.push(
        setTimeout(
          () => void post('transfer', { from: t.from, to: t.to }, `EHR: patient in ${t.from} transferred to ${t.to}`).catch((e) => log(String(e))),
          t.atSeconds * 1000,
        ),
      );
      const d = adt.dischargeAdmit;
      timers.push(
        setTimeout(
          () => void post('discharge', { location: d.location }, `EHR: patient in ${d.location} discharged`).catch((e) => log(String(e))),
          d.atSeconds * 1000,
        ),
      );
      timers.push(
        setTimeout(
          () =>
            void post('admit', { location: d.location, patient: d.patient }, `EHR: new patient ${d.patient.mrn} admitted to ${d.location}`).catch((e) =>
              log(String(e)),
            ),
          (d.atSeconds + d.admitAfterSeconds) * 1000,
        ),
      );
    }
  })();

  let ticking = false;
  async function tick(): Promise<void> {
    if (ticking) return; // a slow disk must not make ticks pile up
    ticking = true;
    try {
      const t = clock.now();
      for (const f of feeds) {
        if (stopped || !sender) return;
        for (const b of f.due(t)) await sender.send(b);
        announceChallenges(f.identifier);
      }
    } finally {
      ticking = false;
    }
  }

  /** One line per challenge put in, with the generator's truth, so a demo viewer knows what to look for. */
  function announceChallenges(identifier: string): void {
    const all = challengesOf(identifier);
    for (const c of all.slice(announced.get(identifier) ?? 0)) {
      const t = c.truth;
      const delta =
        t.deltaPpv === null
          ? ''
          : `, PPV ${t.baselinePpv?.toFixed(1)} → ${t.challengePpv?.toFixed(1)} % put in (${t.deltaPpv >= 0 ? '+' : ''}${t.deltaPpv.toFixed(1)} points)`;
      log(
        `${identifier}: tidal volume challenge, ${t.baselineTidalVolumeMl} → ${t.challengeTidalVolumeMl} mL at ${c.stepAt.toISOString()}${delta}, expected ${t.expected}`,
      );
    }
    announced.set(identifier, all.length);
  }

  const faultsUrl = new URL('/_admin/faults', opts.mockEhrUrl).toString();

  async function putFaults(rules: readonly object[], message: string): Promise<void> {
    if (stopped) return;
    const res = await fetch(faultsUrl, { method: 'PUT', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ rules }) });
    if (!res.ok) throw new Error(`mock EHR answered ${res.status} to PUT /_admin/faults`);
    faultsOn = true;
    log(message);
  }

  async function clearFaults(): Promise<void> {
    const res = await fetch(faultsUrl, { method: 'DELETE' });
    if (!res.ok) throw new Error(`mock EHR answered ${res.status} to DELETE /_admin/faults`);
    faultsOn = false;
    log('EHR outage over (mock EHR faults cleared)');
  }

  /** Waits until the refusal rule has used up its `remaining` faults (it then removes itself), at most `seconds`. */
  async function refusalsUsed(seconds: number): Promise<void> {
    const until = Date.now() + seconds * 1000;
    while (!stopped && Date.now() < until) {
      const view = (await (await fetch(faultsUrl)).json()) as { rules?: unknown[] };
      if ((view.rules ?? []).length === 0) return;
      await new Promise((r) => setTimeout(r, 250));
    }
  }

  return {
    ready,
    assignments: new Map([...scenarios].map(([k, v]) => [k, v.id])),
    challenges: challengesOf,
    async stop() {
      stopped = true;
      for (const t of timers) clearTimeout(t);
      await ready.catch(() => {});
      if (faultsOn) await clearFaults().catch(() => {});
      await sender?.close();
      log(`stopped (${sender?.pending() ?? 0} batches left in ${opts.spoolDir})`);
    },
  };
}

/** Logs what a newcomer should notice, without a line per batch. */
function eventLogger(log: (m: string) => void, scenarios: Map<string, Scenario>): (e: SenderEvent) => void {
  const firstAccepted = new Set<string>();
  const rejections = new Map<string, number>();
  let retries = 0;
  return (e) => {
    if (e.kind === 'accepted' && !firstAccepted.has(e.monitorId)) {
      firstAccepted.add(e.monitorId);
      log(`${e.monitorId} (${scenarios.get(e.monitorId)?.id}) streaming, first batch answered ${e.status}`);
    } else if (e.kind === 'rejected') {
      const n = (rejections.get(e.monitorId) ?? 0) + 1;
      rejections.set(e.monitorId, n);
      if (n === 1 || n % 12 === 0) log(`${e.monitorId} batch refused (${n} so far, kept in ${e.spoolFile}): ${e.reason}`);
    } else if (e.kind === 'retrying') {
      retries++;
      if (retries === 1 || retries % 20 === 0) log(`gateway busy or unreachable, retrying (${retries} retries so far): ${e.reason}`);
    } else if (e.kind === 'replaying') {
      log(`replaying ${e.batches} unsent batches of ${e.monitors} monitors from the spool`);
    }
  };
}
