import type { IngestBatch } from '@ebbgate/shared';
import { NUMERIC_CODES, UNIT_CODES } from '../adapter/hl7/codes';
import { mllpTransport } from '../adapter/hl7/mllp-transport';
import type { OruNumeric } from '../adapter/hl7/oru-message';
import { httpTransport } from '../adapter/http-transport';
import type { BatchTransport } from '../adapter/transport';
import type { Scenario } from '../scenarios/types';

export interface TransportChoice {
  transport: 'http' | 'mllp';
  gatewayUrl: string;
  apiKeys: Map<string, string>;
  mllpHost?: string;
  mllpPort?: number;
  /** Kept-alive HTTP connections (default 64). */
  httpSockets?: number;
  /** Parallel MLLP connections (default 1). */
  mllpConnections?: number;
  /** MLLP over TLS with this adapter's client certificate (PEM contents). */
  mllpTls?: { ca: string | Buffer; cert: string | Buffer; key: string | Buffer };
  /** Scenario of each monitor, for the HR and SpO2 numerics of the HL7 message. */
  scenarioOf: (monitorId: string) => Scenario | undefined;
}

/** The transport the simulator sends through: HTTP JSON with device keys, or ORU^R01 over MLLP. */
export function simulatorTransport(c: TransportChoice): BatchTransport {
  if (c.transport === 'http') return httpTransport({ gatewayUrl: c.gatewayUrl, apiKey: (id) => c.apiKeys.get(id), maxSockets: c.httpSockets });
  return mllpTransport({
    host: c.mllpHost ?? '127.0.0.1',
    port: c.mllpPort ?? 2575,
    ackMode: 'enhanced',
    connections: c.mllpConnections,
    tls: c.mllpTls,
    numerics: (batch: IngestBatch): OruNumeric[] => {
      const s = c.scenarioOf(batch.monitorId);
      if (!s) return [];
      return [
        { code: NUMERIC_CODES.heartRate, value: s.patient.heartRate, unit: UNIT_CODES.beatsPerMin },
        { code: NUMERIC_CODES.spo2, value: s.patient.spo2, unit: UNIT_CODES.percent },
      ];
    },
  });
}
