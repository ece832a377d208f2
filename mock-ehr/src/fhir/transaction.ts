import { randomUUID } from 'node:crypto';
import { etagOf, searchsetBundle, STATUS_TEXT, versionedLocation } from './bundles.js';
import type { Quirks } from './quirks.js';
import { FhirError } from './operation-outcome.js';
import { isSupportedType, type FhirResource } from './resource-types.js';
import type { ResourceService } from './resource-service.js';
import { findMatches, parseSearch, runSearch } from './search.js';
import type { ResourceStore } from './store.js';

// FHIR R4 transaction and batch Bundles. A transaction is all or nothing: ids are settled first
// (urn:uuid fullUrls and conditional creates), references rewritten, then writes run in the
// order POST → PUT → GET inside one store journal that is rolled back on any failure.

type Obj = Record<string, unknown>;
interface Entry {
  index: number;
  method: string;
  url: string;
  type: string;
  resource?: Obj;
  fullUrl?: string;
  ifNoneExist?: string;
}
interface Planned extends Entry {
  id?: string;
  existing?: FhirResource;
  /** An earlier entry of this Bundle with the same conditional create: this one answers its resource. */
  sameAsEarlier?: boolean;
}
interface EntryAnswer {
  status: number;
  resource?: FhirResource;
  outcome?: unknown;
}

export function processBundle(
  body: unknown,
  deps: { store: ResourceStore; service: ResourceService; fhirBase: string; minimal: boolean; quirks?: Quirks },
): FhirResource {
  const bundle = body as Obj | undefined;
  if (!bundle || bundle.resourceType !== 'Bundle') throw FhirError.of(400, 'invalid', 'POST to the base URL takes a Bundle', ['Bundle']);
  if (bundle.type !== 'transaction' && bundle.type !== 'batch')
    throw FhirError.of(400, 'invalid', `Bundle.type must be transaction or batch, not ${String(bundle.type)}`, ['Bundle.type']);
  const entries = readEntries(bundle);
  const answers = new Map<number, EntryAnswer>();
  if (bundle.type === 'transaction') {
    deps.store.atomically(() => {
      const planned = plan(entries, deps.store);
      rewriteReferences(planned, deps.store);
      for (const e of executionOrder(planned)) answers.set(e.index, execute(e, deps));
    });
  } else {
    for (const e of executionOrder(entries)) {
      try {
        const answer = deps.store.atomically(() => {
          const planned = plan([e], deps.store);
          rewriteReferences(planned, deps.store);
          return execute(planned[0]!, deps);
        });
        answers.set(e.index, answer);
      } catch (err) {
        if (!(err instanceof FhirError)) throw err;
        answers.set(e.index, { status: err.status, outcome: err.outcome });
      }
    }
  }
  return {
    resourceType: 'Bundle',
    id: randomUUID(),
    type: `${String(bundle.type)}-response`,
    entry: entries.map((e) => responseEntry(answers.get(e.index)!, deps)),
  };
}

function readEntries(bundle: Obj): Entry[] {
  const raw = bundle.entry ?? [];
  if (!Array.isArray(raw)) throw FhirError.of(400, 'structure', 'Bundle.entry must be an array', ['Bundle.entry']);
  return raw.map((x: Obj, index) => {
    const req = x?.request as Obj | undefined;
    const where = `Bundle.entry[${index}]`;
    if (!req || typeof req.method !== 'string' || typeof req.url !== 'string') {
      throw FhirError.of(400, 'required', `${where}.request needs method and url`, [`${where}.request`]);
    }
    const method = req.method.toUpperCase();
    if (!['POST', 'PUT', 'GET'].includes(method))
      throw FhirError.of(400, 'not-supported', `${where}: method ${method} is not supported`, [`${where}.request.method`]);
    const url = req.url.replace(/^\//, '');
    const type = url.split(/[/?]/)[0]!;
    if (!isSupportedType(type)) throw FhirError.of(400, 'not-supported', `${where}: resource type ${type} is not supported`, [`${where}.request.url`]);
    if (method !== 'GET' && (!x.resource || typeof x.resource !== 'object'))
      throw FhirError.of(400, 'required', `${where}.resource is required for ${method}`, [`${where}.resource`]);
    return {
      index,
      method,
      url,
      type,
      resource: x.resource as Obj | undefined,
      fullUrl: typeof x.fullUrl === 'string' ? x.fullUrl : undefined,
      ifNoneExist: typeof req.ifNoneExist === 'string' ? req.ifNoneExist : undefined,
    };
  });
}

/** Settles the id every POST/PUT entry will have, so references between entries can be rewritten first. */
function plan(entries: Entry[], store: ResourceStore): Planned[] {
  // Two entries with the same ifNoneExist would both see "no match" before either is written; the
  // later one is answered with the earlier one's resource so a Bundle cannot create duplicates.
  const conditionalIds = new Map<string, string>();
  return entries.map((e) => {
    const where = `Bundle.entry[${e.index}]`;
    try {
      if (e.method === 'POST') {
        const key = e.ifNoneExist ? `${e.type}?${e.ifNoneExist}` : undefined;
        const earlier = key ? conditionalIds.get(key) : undefined;
        if (earlier) return { ...e, id: earlier, sameAsEarlier: true };
        const planned = planPost(e, store);
        if (key && planned.id) conditionalIds.set(key, planned.id);
        return planned;
      }
      return planOther(e, store);
    } catch (err) {
      throw prefixed(err, where);
    }
  });
}

function planPost(e: Entry, store: ResourceStore): Planned {
  const matches = e.ifNoneExist ? findMatches(store, e.type, e.ifNoneExist) : [];
  if (matches.length > 1) throw FhirError.of(412, 'multiple-matches', `ifNoneExist "${e.ifNoneExist}" matched ${matches.length} resources`);
  return matches[0] ? { ...e, id: matches[0].id, existing: matches[0] } : { ...e, id: store.newId() };
}

function planOther(e: Entry, store: ResourceStore): Planned {
  if (e.method !== 'PUT') return e;
  if (!e.url.includes('?')) return { ...e, id: e.url.split('/')[1] };
  const matches = findMatches(store, e.type, e.url);
  if (matches.length > 1) throw FhirError.of(412, 'multiple-matches', `conditional update "${e.url}" matched ${matches.length} resources`);
  return { ...e, id: matches[0]?.id ?? (typeof e.resource?.id === 'string' ? e.resource.id : store.newId()) };
}

function rewriteReferences(planned: Planned[], store: ResourceStore): void {
  const map = new Map<string, string>();
  for (const e of planned) if (e.fullUrl && e.id) map.set(e.fullUrl, `${e.type}/${e.id}`);
  for (const e of planned) {
    if (!e.resource) continue;
    e.resource = walk(e.resource, (ref) => {
      if (map.has(ref)) return map.get(ref)!;
      if (ref.startsWith('urn:uuid:')) throw FhirError.of(400, 'not-found', `Bundle.entry[${e.index}]: reference ${ref} names no entry of this Bundle`);
      if (/^[A-Z][A-Za-z]+\?/.test(ref)) {
        const type = ref.slice(0, ref.indexOf('?'));
        const matches = findMatches(store, type, ref);
        if (matches.length !== 1)
          throw FhirError.of(
            412,
            'multiple-matches',
            `Bundle.entry[${e.index}]: conditional reference ${ref} matched ${matches.length} resources (needs exactly 1)`,
          );
        return `${type}/${matches[0]!.id}`;
      }
      return ref;
    }) as Obj;
    if (e.method === 'POST' || e.method === 'PUT') e.resource = { ...e.resource, id: e.id };
  }
}

function walk(value: unknown, rewrite: (ref: string) => string): unknown {
  if (Array.isArray(value)) return value.map((v) => walk(v, rewrite));
  if (!value || typeof value !== 'object') return value;
  const out: Obj = {};
  for (const [k, v] of Object.entries(value)) out[k] = k === 'reference' && typeof v === 'string' ? rewrite(v) : walk(v, rewrite);
  return out;
}

const ORDER: Record<string, number> = { POST: 0, PUT: 1, GET: 2 };
function executionOrder<T extends Entry>(entries: T[]): T[] {
  return [...entries].sort((a, b) => ORDER[a.method]! - ORDER[b.method]! || a.index - b.index);
}

function execute(e: Planned, deps: { store: ResourceStore; service: ResourceService; fhirBase: string }): EntryAnswer {
  const base = `Bundle.entry[${e.index}].resource`;
  try {
    if (e.method === 'POST') {
      if (e.existing) return { status: 200, resource: e.existing };
      if (e.sameAsEarlier) return { status: 200, resource: deps.store.read(e.type, e.id!)! };
      return deps.service.create(e.type, e.resource, { id: e.id, base });
    }
    if (e.method === 'PUT') return deps.service.update(e.type, e.id!, e.resource, { base });
    if (e.url.includes('?') || !e.url.includes('/')) {
      const query = new URLSearchParams(e.url.includes('?') ? e.url.slice(e.url.indexOf('?') + 1) : '');
      const req = parseSearch(e.type, query);
      return { status: 200, resource: searchsetBundle(deps.fhirBase, e.type, query, req, runSearch(deps.store, e.type, req)) };
    }
    const [, id, hist, vid] = e.url.split('/');
    return { status: 200, resource: hist === '_history' && vid ? deps.service.vread(e.type, id!, vid) : deps.service.read(e.type, id!) };
  } catch (err) {
    throw prefixed(err, `Bundle.entry[${e.index}]`);
  }
}

function responseEntry(a: EntryAnswer, deps: { fhirBase: string; minimal: boolean; quirks?: Quirks }): Obj {
  const status = `${a.status} ${STATUS_TEXT[a.status] ?? ''}`.trim();
  if (a.outcome) return { response: { status, outcome: a.outcome } };
  const r = a.resource!;
  const isWrite = r.resourceType !== 'Bundle';
  return {
    ...(isWrite ? { fullUrl: `${deps.fhirBase}/${r.resourceType}/${r.id}` } : {}),
    ...(deps.minimal ? {} : { resource: r }),
    response: {
      status,
      ...(isWrite ? { ...locationOf(r, deps), etag: etagOf(r), lastModified: r.meta?.lastUpdated } : {}),
    },
  };
}

function locationOf(r: FhirResource, deps: { fhirBase: string; quirks?: Quirks }): Obj {
  const style = deps.quirks?.createLocation ?? 'standard';
  if (style === 'none') return {};
  return { location: style === 'absolute' ? `${deps.fhirBase}/${versionedLocation(r)}` : versionedLocation(r) };
}

function prefixed(err: unknown, where: string): unknown {
  if (!(err instanceof FhirError)) return err;
  return new FhirError(
    err.status,
    err.issues.map((i) => ({ ...i, diagnostics: i.diagnostics?.startsWith('Bundle.entry') ? i.diagnostics : `${where}: ${i.diagnostics ?? i.code}` })),
  );
}
