/**
 * Pure builder: one engine result + patient context → one FHIR R4 Observation per index.
 * No I/O and no clock: `issued` is passed in, so the same input always gives the same resource.
 */
import type { AnalysisResult, Flag, IndexValue, Verdict } from '@ebbgate/shared/analysis';
import type { CodeMap, DeliveredIndex } from './code-map';
import type { Annotation, CodeableConcept, Coding, Observation, ObservationComponent, Quantity } from './fhir-types';

export type ObservationStatusSetting = 'preliminary' | 'final';
export type NotValidPolicy = 'withhold' | 'data-absent';

export interface PatientContext {
  patientId: string;
  encounterId: string;
  locationId: string;
  /** Encounter.period.start, when the EHR gives it. */
  encounterStart?: string;
}

export interface ObservationInput {
  assessmentId: string;
  index: DeliveredIndex;
  windowStart: Date;
  windowEnd: Date;
  result: AnalysisResult;
  context: PatientContext;
  /** Server id of the monitor's FHIR Device, or null when it is not known yet. */
  deviceId: string | null;
  status: ObservationStatusSetting;
  notValidPolicy: NotValidPolicy;
  issued: Date;
  codes: CodeMap;
}

export type BuildOutcome = { kind: 'observation'; resource: Observation } | { kind: 'withheld'; reason: string };

/** Which signal each index is read from, to pick the flags that concern it. */
const SOURCE_CHANNEL: Record<DeliveredIndex, string> = { ppv: 'abp', spv: 'abp', deltaPop: 'pleth', perfusionIndex: 'pleth' };

/** The idempotency identifier: one per assessment and index, stable across retries and replays. */
export function observationIdentifier(codes: CodeMap, assessmentId: string, index: DeliveredIndex): { system: string; value: string } {
  return { system: codes.identifierSystems.observation, value: `${assessmentId}-${codes.indices[index].local.code}` };
}

/** If-None-Exist query for conditional create on that identifier (FHIR R4 http.html#ccreate). */
export function ifNoneExistQuery(identifier: { system: string; value: string }): string {
  return `identifier=${encodeURIComponent(`${identifier.system}|${identifier.value}`)}`;
}

export function indexCode(codes: CodeMap, index: DeliveredIndex): CodeableConcept {
  const entry = codes.indices[index];
  const coding: Coding[] = [];
  if (entry.loinc) coding.push({ system: codes.loincSystem, code: entry.loinc.code, display: entry.loinc.display });
  if (entry.mdc) coding.push({ system: codes.mdcSystem, code: entry.mdc.code, display: entry.mdc.display });
  coding.push({ system: codes.localSystem, code: entry.local.code, display: entry.local.display });
  return { coding, text: entry.local.display };
}

function quantity(codes: CodeMap, value: number, unit: { code: string; display: string }): Quantity {
  // Four significant decimals are more than the method's precision and keep the JSON short.
  return { value: Math.round(value * 10_000) / 10_000, unit: unit.display, system: codes.ucumSystem, code: unit.code };
}

function componentCode(codes: CodeMap, entry: CodeMap['components'][keyof CodeMap['components']]): CodeableConcept {
  const coding: Coding[] = [];
  if (entry.loinc) coding.push({ system: codes.loincSystem, code: entry.loinc.code, display: entry.loinc.display });
  if (entry.mdc) coding.push({ system: codes.mdcSystem, code: entry.mdc.code, display: entry.mdc.display });
  coding.push({ system: codes.localSystem, code: entry.local.code, display: entry.local.display });
  return { coding, text: entry.local.display };
}

function components(codes: CodeMap, index: DeliveredIndex, iv: IndexValue, result: AnalysisResult): ObservationComponent[] {
  const c = codes.components;
  const out: ObservationComponent[] = [{ code: componentCode(codes, c.cyclesUsed), valueInteger: iv.cyclesUsed }];
  const unit = codes.indices[index].unit;
  if (iv.spread !== null) out.push({ code: componentCode(codes, c.cycleSpread), valueQuantity: quantity(codes, iv.spread, unit) });
  // Heart and respiratory rate travel along: HR/RR at or below 3.6 voids the index (De Backer 2009).
  const rates: [CodeMap['components'][keyof CodeMap['components']], IndexValue][] = [
    [c.heartRate, result.indices.heartRate],
    [c.respiratoryRate, result.indices.respiratoryRate],
    [c.hrRrRatio, result.indices.hrRrRatio],
  ];
  for (const [entry, value] of rates) {
    if (value.value !== null && entry.unit) out.push({ code: componentCode(codes, entry), valueQuantity: quantity(codes, value.value, entry.unit) });
  }
  return out;
}

/** Window-level flags (respiration, ventilation, rates) concern every index; a pulse channel's only its own. */
function flagsFor(result: AnalysisResult, index: DeliveredIndex): Flag[] {
  const channel = SOURCE_CHANNEL[index];
  const otherSources = new Set<string>([...Object.keys(SOURCE_CHANNEL), 'abp', 'pleth'].filter((x) => x !== index && x !== channel));
  return result.flags.filter((f) => !f.source || !otherSources.has(f.source));
}

function describeFlag(f: Flag): string {
  const direction = f.direction === 'false-high' ? ' (likely reads too high)' : f.direction === 'false-low' ? ' (likely reads too low)' : '';
  return `${f.code} [${f.severity}]${direction}: ${f.reason}`;
}

function interpretation(codes: CodeMap, verdict: Verdict): CodeableConcept[] {
  const v = codes.verdicts[verdict];
  const coding: Coding[] = [{ system: codes.localSystem, code: v.code, display: v.display }];
  if (verdict === 'not-valid')
    coding.push({ system: codes.interpretationSystem, code: codes.notValidInterpretation.code, display: codes.notValidInterpretation.display });
  return [{ coding, text: v.display }];
}

function notes(result: AnalysisResult, index: DeliveredIndex, verdict: Verdict, iv: IndexValue): Annotation[] {
  const flags = flagsFor(result, index);
  const lines = [`Verdict: ${verdict}.`];
  if (iv.value === null && iv.notComputableReason) lines.push(`Not computable: ${iv.notComputableReason}.`);
  lines.push(flags.length ? `Quality flags: ${flags.map(describeFlag).join('; ')}.` : 'Quality flags: none.');
  const bands = result.bands.filter((b) => b.index === index);
  if (bands.length)
    lines.push(
      `Decision bands shown with the value (never an order to treat): ${bands.map((b) => `${b.label} [${b.lower ?? '-∞'}–${b.upper ?? '∞'} ${b.unit}; ${b.source}]`).join('; ')}.`,
    );
  return [{ text: lines.join(' ') }, { text: `Cautions: ${result.cautions.join(' ')}` }];
}

export function buildObservation(input: ObservationInput): BuildOutcome {
  const { codes, index, result } = input;
  const iv = result.indices[index];
  const verdict: Verdict = result.indexVerdicts[index] ?? result.verdict;
  const hasValue = iv.value !== null && verdict !== 'not-valid';
  if (!hasValue && input.notValidPolicy === 'withhold') {
    return { kind: 'withheld', reason: iv.value === null ? `not computable: ${iv.notComputableReason ?? 'no value'}` : 'not valid: withheld by setting' };
  }
  const entry = codes.indices[index];
  const resource: Observation = {
    resourceType: 'Observation',
    identifier: [{ use: 'official', ...observationIdentifier(codes, input.assessmentId, index) }],
    status: input.status,
    category: [
      { coding: codes.category.coding },
      { coding: [{ system: codes.localSystem, code: codes.category.local.code, display: codes.category.local.display }] },
    ],
    code: indexCode(codes, index),
    subject: { reference: `Patient/${input.context.patientId}` },
    encounter: { reference: `Encounter/${input.context.encounterId}` },
    effectivePeriod: { start: input.windowStart.toISOString(), end: input.windowEnd.toISOString() },
    issued: input.issued.toISOString(),
    ...(input.deviceId ? { device: { reference: `Device/${input.deviceId}` } } : {}),
    // obs-6: a value or a dataAbsentReason, never both.
    ...(hasValue ? { valueQuantity: quantity(codes, iv.value as number, entry.unit) } : { dataAbsentReason: dataAbsent(codes, iv.value === null) }),
    interpretation: interpretation(codes, verdict),
    note: notes(result, index, verdict, iv),
    method: { text: `${entry.method}; engine ${result.engineVersion}` },
    component: components(codes, index, iv, result),
  };
  return { kind: 'observation', resource };
}

function dataAbsent(codes: CodeMap, notComputable: boolean): CodeableConcept {
  const d = notComputable ? codes.dataAbsentReason.notComputable : codes.dataAbsentReason.notValid;
  return { coding: [{ system: codes.dataAbsentReasonSystem, code: d.code, display: d.display }], text: d.display };
}

/**
 * The amendment a reviewer's "entered in error" sends: the resource as delivered, with status
 * entered-in-error (FHIR R4 observation-status) and a note saying who and why.
 */
export function enteredInErrorAmendment(delivered: Observation, serverId: string, by: string, reason: string, at: Date): Observation {
  return {
    ...delivered,
    id: serverId,
    status: 'entered-in-error',
    note: [...(delivered.note ?? []), { text: `Marked entered in error by ${by}: ${reason}`, time: at.toISOString() }],
  };
}
