/**
 * OBX-3 / OBX-6 codes the ORU^R01 builder uses: IEEE 11073-10101 nomenclature (MDC codes) and
 * UCUM units, as profiled by IHE PCD-01 (IHE PCD Technical Framework). Status of each code:
 * "confirmed" = read in the standard or an official value set; "from memory" = not re-checked; "local" = our own code system `99EBB` (HL7 v2 table 0396
 * reserves 99zzz for local systems) where no standard code was found.
 */
export interface CodedValue {
  code: string;
  text: string;
  system: string;
}

const mdc = (code: number, refId: string): CodedValue => ({ code: String(code), text: refId, system: 'MDC' });
const local = (code: string, text: string): CodedValue => ({ code, text, system: '99EBB' });

export const WAVEFORM_CODES = {
  abp: mdc(150036, 'MDC_PRESS_BLD_ART_ABP'), // confirmed
  pleth: mdc(150452, 'MDC_PULS_OXIM_PLETH'), // from tables
  // No confirmed MDC code for the airway pressure and CO2 waveforms: local codes, mappable by profile.
  paw: local('EBB_PRESS_AWAY', 'airway pressure waveform'),
  co2: local('EBB_AWAY_CO2', 'airway CO2 waveform'),
} as const;

export const NUMERIC_CODES = {
  heartRate: mdc(147842, 'MDC_ECG_HEART_RATE'), // confirmed
  spo2: mdc(150456, 'MDC_PULS_OXIM_SAT_O2'), // confirmed
  respiratoryRate: mdc(151562, 'MDC_RESP_RATE'), // confirmed (measured rate)
  // REFIDs from memory (IEEE 11073-10101), not confirmed; numeric codes likewise from memory. The
  // gateway's PCD-01 decoder reads these REFIDs (OBX-3.2) as analysis context.
  setRespiratoryRate: mdc(151586, 'MDC_VENT_RESP_RATE_SET'),
  tidalVolume: mdc(151868, 'MDC_VOL_AWAY_TIDAL'),
  patientHeight: local('EBB_PT_HEIGHT', 'patient height'),
  vasopressor: local('EBB_VASOPRESSOR_RUNNING', 'vasopressor infusion running (1 yes, 0 no)'),
} as const;

export const UNIT_CODES = {
  mmHg: mdc(266016, 'MDC_DIM_MMHG'), // confirmed
  percent: mdc(262688, 'MDC_DIM_PERCENT'), // confirmed
  beatsPerMin: mdc(264864, 'MDC_DIM_BEAT_PER_MIN'), // confirmed
  breathsPerMin: mdc(264928, 'MDC_DIM_RESP_PER_MIN'), // confirmed
  dimensionless: mdc(262656, 'MDC_DIM_DIMLESS'), // confirmed
  perSecond: mdc(264608, 'MDC_DIM_PER_SEC'), // confirmed
  cmH2O: mdc(266048, 'MDC_DIM_CM_H2O'), // confirmed
  mL: { code: 'mL', text: 'millilitre', system: 'UCUM' },
  cm: { code: 'cm', text: 'centimetre', system: 'UCUM' },
} as const;

/** Facet row `.1` under a waveform metric: its sample rate (IHE waveform content module; code from memory). */
export const SAMPLE_RATE_ATTR = mdc(67981, 'MDC_ATTR_SAMP_RATE');
/** The device (MDS) row at 1.0.0.0 (from memory, IHE PCD examples). */
export const MDS_CODE = mdc(69965, 'MDC_DEV_MON_PHYSIO_MULTI_PARAM_MDS');
/** OBR-4 universal service id used in IHE PCD examples (from memory). */
export const OBR_SERVICE = { code: '182777000', text: 'monitoring of patient', system: 'SNOMED-CT' } as const;
/** MSH-21 message profile for PCD-01 (confirmed text). */
export const PCD01_PROFILE = 'IHE_PCD_001^IHE PCD^1.3.6.1.4.1.19376.1.6.1.1.1^ISO';

export const UNIT_FOR_ROLE = { abp: UNIT_CODES.mmHg, pleth: UNIT_CODES.dimensionless, paw: UNIT_CODES.cmH2O, co2: UNIT_CODES.mmHg } as const;
