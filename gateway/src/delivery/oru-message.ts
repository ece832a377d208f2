/**
 * HL7 v2.6 ORU^R01 in the IHE PCD-01 style (IHE PCD TF-2; standards.md), built from the same
 * Observation the FHIR destination sends, so both carry one meaning. Pure: no clock, no I/O.
 */
import { escapeHl7, formatHl7Time } from '@ebbgate/shared/hl7';
import type { CodeMap } from './code-map';
import type { Coding, Observation } from './fhir-types';

export interface OruInput {
  observation: Observation;
  /** MSH-10: stable per delivery row, so a receiver can drop a repeat. */
  controlId: string;
  mrn: string | null;
  locationIdentifier: string;
  sendingFacility: string;
  receivingApplication: string;
  monitorIdentifier: string | null;
  at: Date;
}

/** Escaping (HL7 v2 ch. 2.7) and DTM timestamps from the shared HL7 kit. */
const esc = (s: string): string => escapeHl7(s);
const ts = (at: string | Date): string => formatHl7Time(at);

/** OBX-3 CWE: MDC when there is one (code^REFID^MDC), else our local code under a 99-prefixed local system. */
function obx3(codes: CodeMap, coding: Coding[]): string {
  const mdc = coding.find((c) => c.system === codes.mdcSystem);
  if (mdc) return `${mdc.code}^${esc(mdc.display ?? '')}^MDC`;
  const local = coding.find((c) => c.system === codes.localSystem)!;
  return `${esc(local.code ?? '')}^${esc(local.display ?? '')}^99EBG`;
}

/** OBX-11: R preliminary, F final, W wrong (entered in error), X cannot be obtained (HL7 table 0085). */
function resultStatus(o: Observation): string {
  if (o.status === 'entered-in-error') return 'W';
  if (!o.valueQuantity) return 'X';
  return o.status === 'final' ? 'F' : 'R';
}

export function buildOru(codes: CodeMap, i: OruInput): string {
  const o = i.observation;
  const ident = o.identifier[0]?.value ?? i.controlId;
  const segs: string[] = [
    [
      'MSH',
      '^~\\&',
      'EBBGATE',
      esc(i.sendingFacility),
      esc(i.receivingApplication),
      esc(i.sendingFacility),
      ts(i.at),
      '',
      'ORU^R01^ORU_R01',
      esc(i.controlId),
      'P',
      '2.6',
      '',
      '',
      'AL',
      'NE',
      '',
      'UNICODE UTF-8',
      '',
      '',
      'IHE_PCD_001^IHE PCD^1.3.6.1.4.1.19376.1.6.1.1.1^ISO',
    ].join('|'),
    ['PID', '', '', i.mrn ? `${esc(i.mrn)}^^^${esc(i.sendingFacility)}^MR` : ''].join('|'),
    ['PV1', '', 'I', esc(i.locationIdentifier)].join('|'),
    ['OBR', '1', `${esc(ident)}^EBBGATE`, '', obx3(codes, o.code.coding ?? []), '', '', ts(o.effectivePeriod.start), ts(o.effectivePeriod.end)].join('|'),
  ];
  const unit = o.valueQuantity ? `${esc(o.valueQuantity.code ?? '')}^${esc(o.valueQuantity.unit ?? '')}^UCUM` : '';
  const eq = i.monitorIdentifier ? `${esc(i.monitorIdentifier)}^^${esc(i.monitorIdentifier)}^EUI-64` : '';
  segs.push(
    [
      'OBX',
      '1',
      'NM',
      obx3(codes, o.code.coding ?? []),
      '1.0.0.1',
      o.valueQuantity ? String(o.valueQuantity.value) : '',
      unit,
      '',
      '',
      '',
      '',
      resultStatus(o),
      '',
      '',
      ts(o.effectivePeriod.end),
      '',
      '',
      'ACALC^auto-calculation^MDC',
      eq,
    ].join('|'),
  );
  (o.note ?? []).forEach((n, k) => segs.push(['NTE', String(k + 1), '', esc(n.text)].join('|')));
  return segs.join('\r') + '\r';
}
