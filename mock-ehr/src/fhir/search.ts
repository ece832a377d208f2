import { matchesDate, parseFhirDate, type DatePrefix } from './date-range.js';
import { FhirError } from './operation-outcome.js';
import type { FhirResource } from './resource-types.js';
import { SEARCH_PARAMS, type ParamDef, type Token } from './search-params.js';
import type { ResourceStore } from './store.js';

// FHIR R4 RESTful search over the in-memory store: parameters AND together, comma-separated values OR.

/** Result parameters that shape the answer rather than filter it. */
const IGNORED = new Set(['_format', '_pretty', '_total', '_elements']);
const DATE_PREFIXES = new Set(['eq', 'ne', 'gt', 'lt', 'ge', 'le', 'sa', 'eb']);

export interface SearchRequest {
  /** An identifier=system|value criterion, when present, narrows the scan through the store's index. */
  identifier?: { system: string; value: string };
  count?: number;
  offset: number;
  summaryCount: boolean;
  match: (r: FhirResource) => boolean;
}

export interface SearchResult {
  total: number;
  page: FhirResource[];
}

/** Parses a query; unknown parameters are refused (strict handling) so a client's typo cannot pass unseen. */
export function parseSearch(type: string, query: URLSearchParams): SearchRequest {
  const defs = SEARCH_PARAMS[type];
  if (!defs) throw FhirError.of(404, 'not-supported', `resource type ${type} is not supported`);
  const tests: ((r: FhirResource) => boolean)[] = [];
  let count: number | undefined;
  let offset = 0;
  let summaryCount = false;
  let identifier: SearchRequest['identifier'];
  for (const [rawName, value] of query) {
    if (rawName === 'identifier' && !value.includes(',')) {
      const bar = value.indexOf('|');
      if (bar > 0 && bar < value.length - 1) identifier = { system: value.slice(0, bar), value: value.slice(bar + 1) };
    }
    if (IGNORED.has(rawName)) continue;
    if (rawName === '_count' || rawName === '_offset') {
      const n = Number(value);
      if (!Number.isInteger(n) || n < 0) throw FhirError.of(400, 'invalid', `${rawName} must be a non-negative integer`, [rawName]);
      if (rawName === '_count') count = n;
      else offset = n;
      continue;
    }
    if (rawName === '_summary') {
      if (value !== 'count' && value !== 'false') throw FhirError.of(400, 'not-supported', `_summary=${value} is not supported`);
      summaryCount = value === 'count';
      continue;
    }
    const [name, modifier] = rawName.split(':') as [string, string | undefined];
    const def = defs[name];
    if (!def) throw FhirError.of(400, 'not-supported', `search parameter ${name} is not supported for ${type}`, [rawName]);
    tests.push(compile(def, modifier, value, rawName));
  }
  return { identifier, count, offset, summaryCount, match: (r) => tests.every((t) => t(r)) };
}

export function runSearch(store: ResourceStore, type: string, req: SearchRequest): SearchResult {
  const matches = candidates(store, type, req).filter(req.match);
  const end = req.count === undefined ? undefined : req.offset + req.count;
  return { total: matches.length, page: req.summaryCount ? [] : matches.slice(req.offset, end) };
}

/** Every match for a conditional query (If-None-Exist, conditional update, conditional reference). */
export function findMatches(store: ResourceStore, type: string, query: string): FhirResource[] {
  const q = new URLSearchParams(query.includes('?') ? query.slice(query.indexOf('?') + 1) : query);
  if ([...q.keys()].length === 0) throw FhirError.of(400, 'invalid', 'a conditional request needs at least one search parameter');
  const req = parseSearch(type, q);
  return candidates(store, type, req).filter(req.match);
}

function candidates(store: ResourceStore, type: string, req: SearchRequest): FhirResource[] {
  return req.identifier ? store.byIdentifier(type, req.identifier.system, req.identifier.value) : store.all(type);
}

function compile(def: ParamDef, modifier: string | undefined, value: string, rawName: string): (r: FhirResource) => boolean {
  if (modifier === 'missing') {
    const wantMissing = value === 'true';
    return (r) => (def.values(r).length === 0) === wantMissing;
  }
  if (modifier && !(def.kind === 'string' && modifier === 'exact')) {
    throw FhirError.of(400, 'not-supported', `modifier :${modifier} is not supported`, [rawName]);
  }
  const alternatives = value.split(',').map((v) => matcher(def, modifier, v, rawName));
  return (r) => alternatives.some((m) => m(r));
}

function matcher(def: ParamDef, modifier: string | undefined, value: string, rawName: string): (r: FhirResource) => boolean {
  switch (def.kind) {
    case 'token': {
      const want = parseToken(value);
      return (r) => def.values(r).some((t) => tokenMatches(want, t));
    }
    case 'reference': {
      const want = normaliseReference(value, def.target);
      return (r) => def.values(r).some((ref) => referenceMatches(want, normaliseReference(ref)));
    }
    case 'string': {
      const v = value.toLowerCase();
      return modifier === 'exact' ? (r) => def.values(r).some((s) => s === value) : (r) => def.values(r).some((s) => s.toLowerCase().startsWith(v));
    }
    case 'date': {
      const prefix = DATE_PREFIXES.has(value.slice(0, 2)) ? (value.slice(0, 2) as DatePrefix) : 'eq';
      const search = parseFhirDate(prefix === 'eq' && !value.startsWith('eq') ? value : value.slice(2));
      if (!search) throw FhirError.of(400, 'invalid', `${rawName}: "${value}" is not a FHIR date`, [rawName]);
      return (r) => def.values(r).some((target) => matchesDate(prefix, search, target));
    }
  }
}

/** Token syntax: `code`, `system|code`, `|code` (no system), `system|` (any code in system). */
interface TokenQuery {
  system?: string | null;
  code?: string;
}
function parseToken(value: string): TokenQuery {
  const bar = value.indexOf('|');
  if (bar < 0) return { code: value };
  const system = value.slice(0, bar);
  const code = value.slice(bar + 1);
  return { system: system === '' ? null : system, code: code === '' ? undefined : code };
}
function tokenMatches(want: TokenQuery, t: Token): boolean {
  if (want.system === null && t.system !== undefined) return false;
  if (want.system && t.system !== want.system) return false;
  return want.code === undefined || t.code === want.code;
}

/** `Type/id`, a bare `id` or an absolute URL ending in `Type/id`. */
interface RefQuery {
  type?: string;
  id: string;
}
function normaliseReference(value: string, defaultType?: string): RefQuery {
  const parts = value.split('/').filter(Boolean);
  const hist = parts.indexOf('_history');
  const p = hist >= 0 ? parts.slice(0, hist) : parts;
  if (p.length >= 2) return { type: p[p.length - 2], id: p[p.length - 1]! };
  return { type: defaultType, id: value };
}
function referenceMatches(want: RefQuery, have: RefQuery): boolean {
  return want.id === have.id && (!want.type || !have.type || want.type === have.type);
}
