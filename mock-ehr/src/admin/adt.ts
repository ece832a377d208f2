import { randomUUID } from 'node:crypto';
import { FhirError } from '../fhir/operation-outcome.js';
import type { FhirResource } from '../fhir/resource-types.js';
import type { ResourceStore } from '../fhir/store.js';
import { LOCATION_SYSTEM } from '../seed/hospital-file.js';
import { patientIdFor, patientResource } from '../seed/seed-resources.js';

// ADT-style changes as an EHR records them (FHIR R4 Encounter): a transfer ends the stay at one
// Location (location[].period.end, status completed) and opens one at the next; a discharge
// finishes the encounter (period.end); an admission starts a new in-progress encounter. Each is
// also written to an occupancy log kept apart from the Encounters, so a reconciliation can ask
// "who was in this bed at time t" without reading the EHR the way the gateway does.

type Obj = Record<string, unknown>;
type LocationEntry = { location: { reference: string; display?: string }; status?: string; period?: { start?: string; end?: string } };

/** The encounter's location entries with every open stay ended at `t` (status completed, period.end). */
function staysEnded(enc: Obj, t: string): LocationEntry[] {
  return ((enc.location as LocationEntry[] | undefined) ?? []).map((l) =>
    l.status === 'completed'
      ? l
      : { ...l, status: 'completed', period: { ...l.period, start: l.period?.start ?? (enc.period as { start: string }).start, end: t } },
  );
}

export interface Occupancy {
  locationIdentifier: string;
  patientId: string;
  encounterId: string;
  from: string;
  to: string | null;
}

export interface AdtEvent {
  at: string;
  kind: 'transfer' | 'discharge' | 'admit';
  patientId: string;
  encounterId: string;
  from?: string;
  to?: string;
}

export class Adt {
  private occupancy: Occupancy[] = [];
  private events: AdtEvent[] = [];

  constructor(private readonly store: ResourceStore) {}

  /** Rebuilt from the seeded Encounters (in-progress, with a period.start, one location each). */
  reset(): void {
    this.occupancy = [];
    this.events = [];
    for (const e of this.store.all('Encounter')) {
      const start = (e.period as { start?: string } | undefined)?.start;
      const loc = this.locationIdentifierOf(((e.location as LocationEntry[] | undefined) ?? [])[0]?.location.reference);
      const subject = (e.subject as { reference?: string } | undefined)?.reference;
      if (e.status === 'in-progress' && start && loc && subject)
        this.occupancy.push({ locationIdentifier: loc, patientId: subject.slice('Patient/'.length), encounterId: e.id!, from: start, to: null });
    }
  }

  view(): { occupancy: Occupancy[]; events: AdtEvent[] } {
    return { occupancy: [...this.occupancy], events: [...this.events] };
  }

  /** The patient moves to another bed (which must be free) within the same encounter. */
  transfer(fromIdentifier: string, toIdentifier: string, at = new Date()): AdtEvent {
    const stay = this.current(fromIdentifier);
    if (!stay) throw FhirError.of(409, 'conflict', `nobody is in ${fromIdentifier}`);
    if (this.current(toIdentifier)) throw FhirError.of(409, 'conflict', `${toIdentifier} is occupied`);
    const to = this.location(toIdentifier);
    const enc = this.encounter(stay.encounterId);
    const t = at.toISOString();
    const entries = staysEnded(enc, t);
    entries.push({ location: { reference: `Location/${to.id}`, display: String(to.name ?? toIdentifier) }, status: 'active', period: { start: t } });
    this.store.write({ ...enc, location: entries } as FhirResource & { id: string });
    stay.to = t;
    this.occupancy.push({ locationIdentifier: toIdentifier, patientId: stay.patientId, encounterId: stay.encounterId, from: t, to: null });
    return this.log({ at: t, kind: 'transfer', patientId: stay.patientId, encounterId: stay.encounterId, from: fromIdentifier, to: toIdentifier });
  }

  /** The encounter in the bed ends. */
  discharge(identifier: string, at = new Date()): AdtEvent {
    const stay = this.current(identifier);
    if (!stay) throw FhirError.of(409, 'conflict', `nobody is in ${identifier}`);
    const enc = this.encounter(stay.encounterId);
    const t = at.toISOString();
    const entries = staysEnded(enc, t);
    this.store.write({ ...enc, status: 'finished', period: { ...(enc.period as Obj), end: t }, location: entries } as FhirResource & { id: string });
    stay.to = t;
    return this.log({ at: t, kind: 'discharge', patientId: stay.patientId, encounterId: stay.encounterId, from: identifier });
  }

  /** A new patient (made up by the caller) is admitted to a free bed. */
  admit(
    identifier: string,
    p: { mrn: string; family: string; given: string[]; sex: 'female' | 'male' | 'other' | 'unknown'; birthDate: string },
    at = new Date(),
  ): AdtEvent {
    if (this.current(identifier)) throw FhirError.of(409, 'conflict', `${identifier} is occupied`);
    const loc = this.location(identifier);
    const patientId = patientIdFor(p.mrn);
    const t = at.toISOString();
    this.store.write(patientResource(p));
    const encounterId = `enc-${randomUUID().slice(0, 12)}`;
    this.store.write({
      resourceType: 'Encounter',
      id: encounterId,
      status: 'in-progress',
      class: { system: 'http://terminology.hl7.org/CodeSystem/v3-ActCode', code: 'IMP', display: 'inpatient encounter' },
      subject: { reference: `Patient/${patientId}` },
      period: { start: t },
      location: [{ location: { reference: `Location/${loc.id}`, display: String(loc.name ?? identifier) }, status: 'active', period: { start: t } }],
    } as FhirResource & { id: string });
    this.occupancy.push({ locationIdentifier: identifier, patientId, encounterId, from: t, to: null });
    return this.log({ at: t, kind: 'admit', patientId, encounterId, to: identifier });
  }

  private log(e: AdtEvent): AdtEvent {
    this.events.push(e);
    return e;
  }

  private current(identifier: string): Occupancy | undefined {
    return this.occupancy.find((o) => o.locationIdentifier === identifier && o.to === null);
  }

  private location(identifier: string): FhirResource {
    const l = this.store.byIdentifier('Location', LOCATION_SYSTEM, identifier)[0];
    if (!l) throw FhirError.of(404, 'not-found', `no Location ${identifier}`);
    return l;
  }

  private encounter(id: string): FhirResource {
    const e = this.store.read('Encounter', id);
    if (!e) throw FhirError.of(404, 'not-found', `no Encounter ${id}`);
    return structuredClone(e);
  }

  private locationIdentifierOf(reference: string | undefined): string | undefined {
    const id = reference?.split('/').pop();
    const l = id ? this.store.read('Location', id) : undefined;
    return ((l?.identifier as { value?: string }[] | undefined) ?? [])[0]?.value;
  }
}
