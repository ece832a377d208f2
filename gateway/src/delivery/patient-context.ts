/**
 * Who is in the bed: bed → Location (by identifier) → in-progress Encounter at that Location →
 * Patient, by FHIR search through fhir-kit-client. Answers are cached for a while; "nobody" is
 * not cached, so a result waiting for context is retried against the EHR's current state.
 */
import type { EhrClient } from './ehr-client';
import type { Bundle } from './fhir-types';
import type { PatientContext } from './observation-builder';

function firstResource(b: Bundle): Record<string, unknown> | undefined {
  return b.entry?.find((e) => e.resource)?.resource;
}

/** `system|value` or a bare value (FHIR token search accepts both). */
export function locationSearchToken(locationIdentifier: string): string {
  return locationIdentifier;
}

export class PatientContextResolver {
  private readonly cache = new Map<string, { value: PatientContext; until: number }>();

  constructor(
    private readonly ehr: EhrClient,
    private readonly ttlMs: number,
    private readonly now: () => number = Date.now,
  ) {}

  clear(): void {
    this.cache.clear();
  }

  /** null when the bed has no in-progress encounter; throws when the EHR cannot be asked. */
  async resolve(locationIdentifier: string): Promise<PatientContext | null> {
    const hit = this.cache.get(locationIdentifier);
    if (hit && hit.until > this.now()) return hit.value;
    const location = firstResource(await this.ehr.search('Location', { identifier: locationSearchToken(locationIdentifier) }));
    if (!location?.id) return null;
    const locationId = String(location.id);
    const encounter = firstResource(await this.ehr.search('Encounter', { location: `Location/${locationId}`, status: 'in-progress' }));
    const subject = (encounter?.subject as { reference?: string } | undefined)?.reference;
    if (!encounter?.id || !subject?.startsWith('Patient/')) return null;
    const start = (encounter.period as { start?: string } | undefined)?.start;
    const value: PatientContext = { patientId: subject.slice('Patient/'.length), encounterId: String(encounter.id), locationId, ...(start ? { encounterStart: start } : {}) };
    if (this.ttlMs > 0) this.cache.set(locationIdentifier, { value, until: this.now() + this.ttlMs });
    return value;
  }
}
