import type { AnalysisContext } from './types';

/** The ventilator settings whose change inside a window breaks the steady state the indices need. */
const SETTINGS: { key: 'ventilationMode' | 'setRespiratoryRate' | 'tidalVolumeMl'; label: string; unit: string }[] = [
  { key: 'ventilationMode', label: 'ventilation mode', unit: '' },
  { key: 'setRespiratoryRate', label: 'set rate', unit: ' /min' },
  { key: 'tidalVolumeMl', label: 'tidal volume', unit: ' mL' },
];

/**
 * The ventilator setting changes between consecutive batch contexts of one window (oldest first),
 * in words: "tidal volume 429 → 572 mL". A setting given in only one of two contexts is not a
 * change (nothing says what it was), so a batch that leaves a setting out changes nothing.
 */
export function ventilatorSettingChanges(contexts: (AnalysisContext | undefined)[]): string[] {
  const out: string[] = [];
  for (let i = 1; i < contexts.length; i++) {
    const before = contexts[i - 1];
    const after = contexts[i];
    if (!before || !after) continue;
    for (const { key, label, unit } of SETTINGS) {
      const a = before[key];
      const b = after[key];
      if (a !== undefined && b !== undefined && a !== b) out.push(`${label} ${a} → ${b}${unit}`);
    }
  }
  return out;
}
