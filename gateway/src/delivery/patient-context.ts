/**
 * Who was in the bed at the window's time: bed → Location (by identifier) → the Encounters at that
 * Location (in progress or finished) → the one whose period, and whose stay at this Location
 * (Encounter.location[].period, where the EHR gives it), covers the window → Patient (name, MRN).
 *
 * Rules that keep a value out of the wrong chart (FHIR R4 Encounter: period, location.period):
 * - an Encounter without period.start is never used (nothing says when the patient arrived);
 * - more than one Encounter covering the time, or none: no context (the row waits; never a guess);
 * - a cached answer only speaks for times before it was fetched (a window after the fetch asks
 *   the EHR again: a discharge or transfer since then would not be in the cache), and a bed
 *   reassignment or ADT-style change drops the bed's cached answer at once.
 */
import type { EhrClient } from './ehr-client';
import type { Bundle } from './fhir-types';
import type { PatientContext } from './observation-builder';

type Obj = Record<string, unknown>;

/** The context in force at a time, with what the console shows of the patient. */
export interface ResolvedContext extends PatientContext {
  encounterStart: string;
  patientName: string | null;
  patientMrn: string | null;
}

export type ContextAnswer = { kind: 'found'; context: ResolvedContext } | { kind: 'none'; reason: string };

interface Stay {
  encounterId: string;
  patientId: string;
  start: number;
  end: number;
  encounterStart: string;
}

interface CachedLocation {
  locationId: string;
  stays: Stay[];
  /** Encounters at the bed the EHR gave without period.start (refused, named in the reason). */
  undated: string[];
  fetchedAt: number;
  until: number;
}

const resources = (b: Bundle): Obj[] => (b.entry ?? []).map((e) => e.resource).filter((r): r is Obj => !!r);
const time = (s: unknown): number | undefined => {
  if (typeof s !== 'string') return undefined;
  const t = Date.parse(s);
  return Number.isFinite(t) ? t : undefined;
};

/** `system|value` or a bare value (FHIR token search accepts both). */
export function locationSearchToken(locationIdentifier: string): string {
  return locationIdentifier;
}

/**
 * The stays an Encounter had at one Location. With location periods: each entry's period,
 * clipped to the encounter's period (an open end means still there). Without: the whole encounter
 * (the only Location it names is this one). No period.start: none (refused).
 */
export function staysAt(encounter: Obj, locationId: string): Stay[] | 'undated' {
  const status = encounter.status;
  if (status !== 'in-progress' && status !== 'finished' && status !== 'onleave') return [];
  const subject = (encounter.subject as { reference?: string } | undefined)?.reference;
  if (!subject?.startsWith('Patient/') || typeof encounter.id !== 'string') return [];
  const period = (encounter.period ?? {}) as { start?: string; end?: string };
  const start = time(period.start);
  if (start === undefined) return 'undated';
  // A finished encounter with no end is not trusted past its start: treat the end as unknown (no stay).
  const end = time(period.end) ?? (status === 'finished' ? undefined : Number.POSITIVE_INFINITY);
  if (end === undefined) return [];
  const base = { encounterId: encounter.id, patientId: subject.slice('Patient/'.length), encounterStart: period.start! };
  const entries = (Array.isArray(encounter.location) ? encounter.location : []) as {
    location?: { reference?: string };
    period?: { start?: string; end?: string };
    status?: string;
  }[];
  const here = entries.filter((l) => l.location?.reference === `Location/${locationId}` || l.location?.reference?.endsWith(`/Location/${locationId}`));
  if (!here.length) return [];
  const withPeriods = entries.some((l) => l.period?.start);
  if (!withPeriods) return here.length === entries.length ? [{ ...base, start, end }] : [];
  const out: Stay[] = [];
  for (const l of here) {
    const s = time(l.period?.start);
    if (s === undefined) continue;
    const e = time(l.period?.end) ?? (l.status === 'completed' ? undefined : end);
    if (e === undefined) continue;
    out.push({ ...base, start: Math.max(s, start), end: Math.min(e, end) });
  }
  return out;
}

export function patientName(p: Obj): string | null {
  const names = (Array.isArray(p.name) ? p.name : []) as { use?: string; text?: string; family?: string; given?: string[] }[];
  const n = names.find((x) => x.use === 'official') ?? names.find((x) => x.use !== 'old') ?? names[0];
  if (!n) return null;
  if (n.text) return n.text;
  const s = [...(n.given ?? []), n.family].filter(Boolean).join(' ');
  return s || null;
}

/** The MRN: the identifier typed MR (HL7 v2 table 0203), as FHIR R4 Patient.identifier carries it. */
export function patientMrn(p: Obj): string | null {
  const ids = (Array.isArray(p.identifier) ? p.identifier : []) as { value?: string; type?: { coding?: { code?: string }[] } }[];
  return ids.find((x) => x.type?.coding?.some((c) => c.code === 'MR'))?.value ?? null;
}

export class PatientContextResolver {
  private readonly locations = new Map<string, CachedLocation>();
  private readonly patients = new Map<string, { name: string | null; mrn: string | null; until: number }>();
  /** Counted for metrics and tests: EHR round trips for the bed history. */
  fetches = 0;

  constructor(
    private readonly ehr: EhrClient,
    private readonly ttlMs: number,
    private readonly now: () => number = Date.now,
  ) {}

  clear(): void {
    this.locations.clear();
    this.patients.clear();
  }

  /** A bed was reassigned or an ADT-style change arrived: its cached answer is gone. */
  drop(locationIdentifier: string): void {
    this.locations.delete(locationIdentifier);
  }

  /** Throws when the EHR cannot be asked. */
  async resolveAt(locationIdentifier: string, at: Date, until: Date = at): Promise<ContextAnswer> {
    const t = at.getTime();
    const tEnd = Math.max(t, until.getTime());
    const cached = this.locations.get(locationIdentifier);
    const now = this.now();
    const fresh = cached && cached.until > now && tEnd <= cached.fetchedAt ? cached : undefined;
    let answer = await this.answer(fresh ?? (await this.fetchLocation(locationIdentifier)), locationIdentifier, at, t, tEnd);
    // "Nobody" is never taken from the cache: the EHR may have recorded the stay since.
    if (answer.kind === 'none' && fresh) answer = await this.answer(await this.fetchLocation(locationIdentifier), locationIdentifier, at, t, tEnd);
    return answer;
  }

  private async answer(loc: CachedLocation | undefined, locationIdentifier: string, at: Date, t: number, tEnd: number): Promise<ContextAnswer> {
    if (!loc) return { kind: 'none', reason: `no Location with identifier ${locationIdentifier} at the EHR` };
    // The whole window must lie in one stay: a window spanning a transfer belongs to nobody for sure.
    const covering = loc.stays.filter((s) => s.start <= t && tEnd <= s.end);
    const patients = new Set(covering.map((s) => s.patientId));
    if (patients.size > 1)
      return {
        kind: 'none',
        reason: `ambiguous: ${patients.size} patients' encounters cover ${at.toISOString()} at ${locationIdentifier} (${covering.map((s) => `Encounter/${s.encounterId}`).join(', ')})`,
      };
    const stay = covering[0];
    if (!stay) {
      const refused = loc.undated.length ? `; encounters without period.start refused: ${loc.undated.map((e) => `Encounter/${e}`).join(', ')}` : '';
      return { kind: 'none', reason: `no encounter at ${locationIdentifier} covers ${at.toISOString()}${refused}` };
    }
    const p = await this.patient(stay.patientId);
    return {
      kind: 'found',
      context: {
        patientId: stay.patientId,
        encounterId: stay.encounterId,
        locationId: loc.locationId,
        encounterStart: stay.encounterStart,
        patientName: p.name,
        patientMrn: p.mrn,
      },
    };
  }

  /** Back-compatible: the context in force now, or null. */
  async resolve(locationIdentifier: string): Promise<ResolvedContext | null> {
    const a = await this.resolveAt(locationIdentifier, new Date(this.now()));
    return a.kind === 'found' ? a.context : null;
  }

  private async fetchLocation(locationIdentifier: string): Promise<CachedLocation | undefined> {
    this.fetches++;
    const fetchedAt = this.now();
    const location = resources(await this.ehr.search('Location', { identifier: locationSearchToken(locationIdentifier) }))[0];
    if (!location?.id) {
      this.locations.delete(locationIdentifier);
      return undefined;
    }
    const locationId = String(location.id);
    const encounters = resources(await this.ehr.search('Encounter', { location: `Location/${locationId}`, _count: '200' }));
    const stays: Stay[] = [];
    const undated: string[] = [];
    for (const e of encounters) {
      const s = staysAt(e, locationId);
      if (s === 'undated') undated.push(String(e.id));
      else stays.push(...s);
    }
    const value: CachedLocation = { locationId, stays, undated, fetchedAt, until: fetchedAt + this.ttlMs };
    if (this.ttlMs > 0) this.locations.set(locationIdentifier, value);
    return value;
  }

  private async patient(id: string): Promise<{ name: string | null; mrn: string | null }> {
    const hit = this.patients.get(id);
    if (hit && hit.until > this.now()) return hit;
    const p = await this.ehr.read('Patient', id);
    const value = { name: patientName(p), mrn: patientMrn(p), until: this.now() + Math.max(this.ttlMs, 1) };
    if (this.ttlMs > 0) this.patients.set(id, value);
    return value;
  }
}
