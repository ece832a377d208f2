/**
 * A FHIR Device per monitor, created the first time and updated when what we know changes
 * (conditional update on the monitor's identifier, FHIR R4 http.html#cond-update).
 */
import type { CodeMap } from './code-map';
import type { EhrClient } from './ehr-client';
import type { Device } from './fhir-types';

export interface MonitorFacts {
  identifier: string;
  manufacturer: string | null;
  model: string | null;
  locationId: string | null;
}

export function deviceResource(codes: CodeMap, m: MonitorFacts): Device {
  return {
    resourceType: 'Device',
    identifier: [{ system: codes.identifierSystems.device, value: m.identifier }],
    status: 'active',
    ...(m.manufacturer ? { manufacturer: m.manufacturer } : {}),
    ...(m.model ? { modelNumber: m.model, deviceName: [{ name: m.model, type: 'model-name' as const }] } : {}),
    type: { text: codes.device.typeText },
    ...(m.locationId ? { location: { reference: `Location/${m.locationId}` } } : {}),
  };
}

export class DeviceSync {
  /** monitor identifier → server id and the JSON last written, so unchanged devices are not re-sent. */
  private readonly known = new Map<string, { id: string; json: string }>();
  private readonly inFlight = new Map<string, Promise<string>>();

  constructor(
    private readonly ehr: EhrClient,
    private readonly codes: CodeMap,
  ) {}

  async ensure(m: MonitorFacts): Promise<string> {
    const resource = deviceResource(this.codes, m);
    const json = JSON.stringify(resource);
    const k = this.known.get(m.identifier);
    if (k && k.json === json) return k.id;
    const key = `${m.identifier}\n${json}`;
    let p = this.inFlight.get(key);
    if (!p) {
      p = this.ehr
        .upsertDevice(resource, { system: this.codes.identifierSystems.device, value: m.identifier })
        .then((id) => {
          this.known.set(m.identifier, { id, json });
          return id;
        })
        .finally(() => this.inFlight.delete(key));
      this.inFlight.set(key, p);
    }
    return p;
  }
}
