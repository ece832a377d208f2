/**
 * The project's HL7 v2 kit: MLLP framing, delimiters and escaping, DTM timestamps and a bounded
 * segment reader. Every HL7 peer in Ebbgate (gateway listener and ACKs, the HL7 destination,
 * the adapter client and simulator) uses these; tests that check interoperability talk to an
 * independent implementation (node-hl7-client) instead.
 */
export * from './mllp';
export * from './escape';
export * from './time';
export * from './message';
