/** MLLP framing lives in the shared HL7 kit; re-exported here for the adapter client's public API. */
export { frameMllp, MllpDeframer, MLLP_CR, MLLP_END, MLLP_START } from '@ebbgate/shared/hl7';
