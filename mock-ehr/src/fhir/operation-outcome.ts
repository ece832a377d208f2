// FHIR R4 OperationOutcome: the body of every FHIR error answer (issue.severity and issue.code required).

export type IssueSeverity = 'fatal' | 'error' | 'warning' | 'information';
/** A subset of the FHIR R4 IssueType value set (http://hl7.org/fhir/issue-type). */
export type IssueCode =
  | 'invalid'
  | 'structure'
  | 'required'
  | 'value'
  | 'invariant'
  | 'security'
  | 'login'
  | 'forbidden'
  | 'not-found'
  | 'not-supported'
  | 'duplicate'
  | 'multiple-matches'
  | 'conflict'
  | 'processing'
  | 'exception'
  | 'timeout'
  | 'throttled'
  | 'transient'
  | 'too-costly'
  | 'informational';

export interface OutcomeIssue {
  severity: IssueSeverity;
  code: IssueCode;
  diagnostics?: string;
  expression?: string[];
}

export interface OperationOutcome {
  resourceType: 'OperationOutcome';
  issue: OutcomeIssue[];
}

export function operationOutcome(issues: OutcomeIssue[]): OperationOutcome {
  return { resourceType: 'OperationOutcome', issue: issues };
}

/** An expected FHIR failure: carries the HTTP status and the issues to answer with. */
export class FhirError extends Error {
  constructor(
    readonly status: number,
    readonly issues: OutcomeIssue[],
  ) {
    super(issues.map((i) => i.diagnostics ?? i.code).join('; '));
    this.name = 'FhirError';
  }

  static of(status: number, code: IssueCode, diagnostics: string, expression?: string[]): FhirError {
    return new FhirError(status, [{ severity: 'error', code, diagnostics, ...(expression ? { expression } : {}) }]);
  }

  get outcome(): OperationOutcome {
    return operationOutcome(this.issues);
  }
}
