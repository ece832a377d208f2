import type { ResourceStore } from '../fhir/store.js';

// Exactly-once checks: how many distinct Observation resources carry each identifier.

export interface ObservationCounts {
  total: number;
  withoutIdentifier: number;
  byIdentifier: Record<string, number>;
  /** identifiers (system|value) held by more than one Observation: each one a duplicate delivery. */
  duplicated: string[];
}

export function countObservations(store: ResourceStore): ObservationCounts {
  const all = store.all('Observation');
  const byIdentifier: Record<string, number> = {};
  let withoutIdentifier = 0;
  for (const o of all) {
    const ids = (o.identifier as { system?: string; value?: string }[] | undefined) ?? [];
    if (ids.length === 0) withoutIdentifier++;
    for (const key of new Set(ids.map((i) => `${i.system ?? ''}|${i.value ?? ''}`))) byIdentifier[key] = (byIdentifier[key] ?? 0) + 1;
  }
  return { total: all.length, withoutIdentifier, byIdentifier, duplicated: Object.keys(byIdentifier).filter((k) => byIdentifier[k]! > 1) };
}
