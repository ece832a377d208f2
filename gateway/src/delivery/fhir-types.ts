// The slice of FHIR R4 the delivery capability writes and reads. Plain JSON shapes, no library.

export interface Coding {
  system?: string;
  code?: string;
  display?: string;
}
export interface CodeableConcept {
  coding?: Coding[];
  text?: string;
}
export interface Quantity {
  value: number;
  unit?: string;
  system?: string;
  code?: string;
}
export interface Reference {
  reference?: string;
  display?: string;
}
export interface Identifier {
  system?: string;
  value?: string;
  use?: string;
}
export interface Annotation {
  text: string;
  time?: string;
}

export interface ObservationComponent {
  code: CodeableConcept;
  valueQuantity?: Quantity;
  valueInteger?: number;
  dataAbsentReason?: CodeableConcept;
}

export interface Observation {
  resourceType: 'Observation';
  id?: string;
  identifier: Identifier[];
  status: 'preliminary' | 'final' | 'amended' | 'entered-in-error';
  category: CodeableConcept[];
  code: CodeableConcept;
  subject?: Reference;
  encounter?: Reference;
  effectivePeriod: { start: string; end: string };
  issued: string;
  device?: Reference;
  valueQuantity?: Quantity;
  dataAbsentReason?: CodeableConcept;
  interpretation?: CodeableConcept[];
  note?: Annotation[];
  method?: CodeableConcept;
  component?: ObservationComponent[];
}

export interface Device {
  resourceType: 'Device';
  id?: string;
  identifier: Identifier[];
  status: 'active' | 'inactive';
  manufacturer?: string;
  modelNumber?: string;
  deviceName?: { name: string; type: 'user-friendly-name' | 'model-name' | 'manufacturer-name' | 'other' }[];
  type?: CodeableConcept;
  location?: Reference;
}

export interface OperationOutcome {
  resourceType: 'OperationOutcome';
  issue: { severity: string; code: string; diagnostics?: string; details?: CodeableConcept; expression?: string[] }[];
}

export interface BundleEntryResponse {
  status: string;
  location?: string;
  outcome?: OperationOutcome;
}
export interface Bundle {
  resourceType: 'Bundle';
  type: string;
  total?: number;
  entry?: {
    fullUrl?: string;
    resource?: Record<string, unknown>;
    request?: { method: string; url: string; ifNoneExist?: string };
    response?: BundleEntryResponse;
  }[];
}
