import type { OutcomeIssue } from './operation-outcome.js';
import type { FhirResource } from './resource-types.js';

// FHIR R4 Observation invariants, checked in code:
//  obs-6: dataAbsentReason.empty() or value.empty()
//  obs-7: value.empty() or component.code.where(coding.intersect(%resource.code.coding).exists()).empty()

type Obj = Record<string, unknown>;
const hasValueX = (o: Obj) => Object.keys(o).some((k) => /^value[A-Z]/.test(k));
const codings = (cc: unknown): Obj[] => ((cc as Obj | undefined)?.coding as Obj[] | undefined) ?? [];
// FHIRPath intersect compares whole Codings; system + code is what identifies a concept (common practice).
const sameCoding = (a: Obj, b: Obj) => a.system === b.system && a.code === b.code;

export function checkObservationInvariants(obs: FhirResource, base = 'Observation'): OutcomeIssue[] {
  const issues: OutcomeIssue[] = [];
  if (obs.dataAbsentReason !== undefined && hasValueX(obs)) {
    issues.push({
      severity: 'error',
      code: 'invariant',
      diagnostics: 'obs-6: dataAbsentReason SHALL only be present if Observation.value[x] is not present',
      expression: [`${base}.dataAbsentReason`],
    });
  }
  if (hasValueX(obs)) {
    const rootCodings = codings(obs.code);
    const components = (obs.component as Obj[] | undefined) ?? [];
    components.forEach((c, i) => {
      if (codings(c.code).some((cc) => rootCodings.some((rc) => sameCoding(cc, rc)))) {
        issues.push({
          severity: 'error',
          code: 'invariant',
          diagnostics:
            'obs-7: if Observation.code is the same as an Observation.component.code then the value element associated with the code SHALL NOT be present',
          expression: [`${base}.component[${i}].code`],
        });
      }
    });
  }
  return issues;
}
