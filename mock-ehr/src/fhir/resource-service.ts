import { checkObservationInvariants } from './observation-invariants.js';
import { FhirError } from './operation-outcome.js';
import { FHIR_ID, isSupportedType, type FhirResource } from './resource-types.js';
import { validateAgainstSchema } from './schema-validator.js';
import { findMatches } from './search.js';
import type { ResourceStore } from './store.js';

// Create / conditional create / update / conditional update / read, shared by the REST routes and
// by transaction Bundles. Domain only: no Express here.

export interface WriteResult {
  status: 200 | 201;
  resource: FhirResource;
  /** true when a conditional create matched and the posted body was ignored. */
  matchedExisting?: boolean;
}

export function requireType(type: string): void {
  if (!isSupportedType(type)) throw FhirError.of(404, 'not-supported', `resource type ${type} is not supported by this server`);
}

/** Checks the body against the URL type, the FHIR R4 JSON schema and the Observation invariants. */
export function validateResource(body: unknown, type: string, base = type): FhirResource {
  if (!body || typeof body !== 'object' || Array.isArray(body)) throw FhirError.of(400, 'structure', 'the body must be a JSON object (a FHIR resource)');
  const r = body as FhirResource;
  if (r.resourceType !== type) {
    throw FhirError.of(400, 'invalid', `resourceType "${String(r.resourceType)}" does not match the endpoint ${type}`, [`${base}.resourceType`]);
  }
  const issues = validateAgainstSchema(r, base);
  if (type === 'Observation') issues.push(...checkObservationInvariants(r, base));
  if (issues.length > 0) throw new FhirError(422, issues);
  return r;
}

export class ResourceService {
  constructor(private readonly store: ResourceStore) {}

  read(type: string, id: string): FhirResource {
    requireType(type);
    const r = this.store.read(type, id);
    if (!r) throw FhirError.of(404, 'not-found', `${type}/${id} is not known`);
    return r;
  }

  vread(type: string, id: string, versionId: string): FhirResource {
    this.read(type, id);
    const r = this.store.readVersion(type, id, versionId);
    if (!r) throw FhirError.of(404, 'not-found', `${type}/${id} has no version ${versionId}`);
    return r;
  }

  /** POST: the server assigns the id; with ifNoneExist, FHIR R4 conditional create (0 → 201, 1 → 200, more → 412). */
  create(type: string, body: unknown, opts: { ifNoneExist?: string; id?: string; base?: string } = {}): WriteResult {
    requireType(type);
    const resource = validateResource(body, type, opts.base);
    if (opts.ifNoneExist) {
      const matches = findMatches(this.store, type, opts.ifNoneExist);
      if (matches.length === 1) return { status: 200, resource: matches[0]!, matchedExisting: true };
      if (matches.length > 1) {
        throw FhirError.of(412, 'multiple-matches', `If-None-Exist "${opts.ifNoneExist}" matched ${matches.length} ${type} resources`);
      }
    }
    const stored = this.store.write({ ...resource, id: opts.id ?? this.store.newId() });
    return { status: 201, resource: stored };
  }

  /** PUT Type/id: update, or create with the client's id when it does not exist yet (update-as-create). */
  update(type: string, id: string, body: unknown, opts: { ifMatch?: string; base?: string } = {}): WriteResult {
    requireType(type);
    if (!FHIR_ID.test(id)) throw FhirError.of(400, 'invalid', `"${id}" is not a valid FHIR id`);
    const resource = validateResource(body, type, opts.base);
    if (resource.id !== id) throw FhirError.of(400, 'invalid', `the body's id "${String(resource.id)}" must equal the URL id "${id}"`, [`${type}.id`]);
    const existing = this.store.read(type, id);
    if (opts.ifMatch !== undefined) {
      const want = opts.ifMatch.replace(/^W\//, '').replace(/"/g, '');
      if (!existing || existing.meta?.versionId !== want) {
        throw FhirError.of(412, 'conflict', `If-Match ${opts.ifMatch} does not match the current version ${existing?.meta?.versionId ?? '(none)'}`);
      }
    }
    const stored = this.store.write({ ...resource, id });
    return { status: existing ? 200 : 201, resource: stored };
  }

  /** PUT Type?query: FHIR R4 conditional update (0 → create, 1 → update that one, more → 412). */
  conditionalUpdate(type: string, query: string, body: unknown, opts: { base?: string } = {}): WriteResult {
    requireType(type);
    const matches = findMatches(this.store, type, query);
    if (matches.length > 1) throw FhirError.of(412, 'multiple-matches', `conditional update "${query}" matched ${matches.length} ${type} resources`);
    const resource = validateResource(body, type, opts.base);
    const target = matches[0];
    if (target) {
      if (resource.id && resource.id !== target.id)
        throw FhirError.of(400, 'invalid', `the body's id "${resource.id}" differs from the matched ${type}/${String(target.id)}`);
      return { status: 200, resource: this.store.write({ ...resource, id: target.id! }) };
    }
    if (resource.id && !FHIR_ID.test(resource.id)) throw FhirError.of(400, 'invalid', `"${resource.id}" is not a valid FHIR id`);
    return { status: 201, resource: this.store.write({ ...resource, id: resource.id ?? this.store.newId() }) };
  }
}
