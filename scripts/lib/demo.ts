/**
 * The demo scenario on top of a running stack: the demo integrator provisions the simulated
 * monitors through the gateway API (profile, beds, monitors, fresh API keys), then the bedside
 * simulator streams the invented hospital's patients, with a timed EHR outage.
 */
import { demoIntegrator, provisionDemoMonitors, runDemoScenario } from '@ebbgate/simulator';
import { repoRoot } from '../../gateway/src/config/load';

/** Where the demo streams to: a running stack (in-process) or the URLs of separate processes. */
export interface DemoTarget {
  gatewayUrl: string;
  mockEhrUrl: string;
}

export async function startDemo(stack: DemoTarget, spoolDir: string, log: (m: string) => void): Promise<{ stop(): Promise<void> }> {
  const monitors = await provisionDemoMonitors(stack.gatewayUrl, await demoIntegrator(repoRoot), repoRoot);
  log(`ebbgate: simulator streaming ${monitors.length} demo monitors over HTTP (backfilling the last minute)…`);
  const demo = runDemoScenario({ gatewayUrl: stack.gatewayUrl, mockEhrUrl: stack.mockEhrUrl, monitors, spoolDir, log: (m) => log(`simulator: ${m}`) });
  await demo.ready;
  return demo;
}

/** Alerting tuned for the demo: the outage is short, so mail after 30 s down instead of minutes. */
export const DEMO_OVERRIDES = {
  delivery: { alerts: { destinationDownMinutes: 0.5, checkIntervalMs: 5000 } },
};
