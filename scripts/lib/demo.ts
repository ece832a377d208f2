/**
 * The demo scenario on top of a running stack: seed the invented hospital's monitors, give each
 * an API key and start the bedside simulator. Filled in as the devices and simulator land.
 */
import type { RunningStack } from './stack';

export async function startDemo(_stack: RunningStack, _spoolDir: string, log: (m: string) => void): Promise<{ stop(): Promise<void> } | undefined> {
  log('ebbgate: demo simulator not wired yet');
  return undefined;
}
