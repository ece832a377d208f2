import { parseFhirDate, periodInterval, type Interval } from './date-range.js';
import type { FhirResource } from './resource-types.js';

// Search parameters the mock supports, named as in the FHIR R4 search parameter registry.

export interface Token {
  system?: string;
  code: string;
}
export type ParamDef =
  | { kind: 'token'; values: (r: FhirResource) => Token[] }
  | { kind: 'reference'; target?: string; values: (r: FhirResource) => string[] }
  | { kind: 'date'; values: (r: FhirResource) => Interval[] }
  | { kind: 'string'; values: (r: FhirResource) => string[] };

type Obj = Record<string, unknown>;
const arr = (v: unknown): Obj[] => (Array.isArray(v) ? (v as Obj[]) : v && typeof v === 'object' ? [v as Obj] : []);
const str = (v: unknown): string | undefined => (typeof v === 'string' ? v : undefined);

const identifiers = (r: FhirResource): Token[] => arr(r.identifier).flatMap((i) => (str(i.value) ? [{ system: str(i.system), code: i.value as string }] : []));
const codings = (cc: unknown): Token[] =>
  arr(cc)
    .flatMap((c) => arr(c.coding))
    .flatMap((c) => (str(c.code) ? [{ system: str(c.system), code: c.code as string }] : []));
const codeValue =
  (field: string) =>
  (r: FhirResource): Token[] =>
    str(r[field]) ? [{ code: r[field] as string }] : [];
const refs = (v: unknown): string[] => arr(v).flatMap((x) => (str(x.reference) ? [x.reference as string] : []));
const refField = (field: string) => (r: FhirResource) => refs(r[field]);

function effective(r: FhirResource): Interval[] {
  const out: (Interval | undefined)[] = [];
  if (str(r.effectiveDateTime)) out.push(parseFhirDate(r.effectiveDateTime as string));
  if (str(r.effectiveInstant)) out.push(parseFhirDate(r.effectiveInstant as string));
  const p = r.effectivePeriod as Obj | undefined;
  if (p) out.push(periodInterval(str(p.start), str(p.end)));
  return out.filter((i): i is Interval => !!i);
}
function period(r: FhirResource): Interval[] {
  const p = r.period as Obj | undefined;
  const i = p ? periodInterval(str(p.start), str(p.end)) : undefined;
  return i ? [i] : [];
}

const common: Record<string, ParamDef> = {
  _id: { kind: 'token', values: (r) => (r.id ? [{ code: r.id }] : []) },
  _lastUpdated: { kind: 'date', values: (r) => [parseFhirDate(r.meta?.lastUpdated ?? '')].filter((i): i is Interval => !!i) },
  identifier: { kind: 'token', values: identifiers },
};

export const SEARCH_PARAMS: Record<string, Record<string, ParamDef>> = {
  Observation: {
    ...common,
    code: { kind: 'token', values: (r) => codings(r.code) },
    category: { kind: 'token', values: (r) => codings(r.category) },
    status: { kind: 'token', values: codeValue('status') },
    subject: { kind: 'reference', values: refField('subject') },
    patient: { kind: 'reference', target: 'Patient', values: refField('subject') },
    encounter: { kind: 'reference', target: 'Encounter', values: refField('encounter') },
    device: { kind: 'reference', values: refField('device') },
    date: { kind: 'date', values: effective },
  },
  Encounter: {
    ...common,
    status: { kind: 'token', values: codeValue('status') },
    subject: { kind: 'reference', values: refField('subject') },
    patient: { kind: 'reference', target: 'Patient', values: refField('subject') },
    location: { kind: 'reference', target: 'Location', values: (r) => arr(r.location).flatMap((l) => refs(l.location)) },
    date: { kind: 'date', values: period },
  },
  Patient: {
    ...common,
    family: { kind: 'string', values: (r) => arr(r.name).flatMap((n) => (str(n.family) ? [n.family as string] : [])) },
    name: { kind: 'string', values: (r) => arr(r.name).flatMap((n) => [str(n.family), ...((n.given as string[]) ?? [])].filter((s): s is string => !!s)) },
    gender: { kind: 'token', values: codeValue('gender') },
    birthdate: { kind: 'date', values: (r) => [parseFhirDate(str(r.birthDate) ?? '')].filter((i): i is Interval => !!i) },
  },
  Location: {
    ...common,
    name: { kind: 'string', values: (r) => [str(r.name)].filter((s): s is string => !!s) },
    status: { kind: 'token', values: codeValue('status') },
    partof: { kind: 'reference', target: 'Location', values: refField('partOf') },
  },
  Device: {
    ...common,
    status: { kind: 'token', values: codeValue('status') },
    type: { kind: 'token', values: (r) => codings(r.type) },
    location: { kind: 'reference', target: 'Location', values: refField('location') },
  },
};
