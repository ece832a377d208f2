import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { TokenService } from './auth/token-service.js';
import { resolveOptions, type MockEhrOptions } from './config.js';
import { FaultInjector } from './faults/fault-rules.js';
import { ResourceService } from './fhir/resource-service.js';
import { schemaFor } from './fhir/schema-validator.js';
import { SUPPORTED_TYPES } from './fhir/resource-types.js';
import { ResourceStore } from './fhir/store.js';
import { MllpReceiver } from './hl7/mllp-receiver.js';
import { buildApp } from './http/app.js';
import { Adt } from './admin/adt.js';
import { defaultQuirks } from './fhir/quirks.js';
import { RequestLog } from './http/request-log.js';
import { MailCatcher } from './mail/mail-catcher.js';
import { loadHospitalFile } from './seed/hospital-file.js';
import { seedResources } from './seed/seed-resources.js';

export type { MockEhrOptions, MockEhrLogger } from './config.js';
export { MOCK_EHR_DEFAULTS } from './config.js';
export {
  hospitalFileSchema,
  loadHospitalFile,
  LOCATION_SYSTEM,
  MRN_SYSTEM,
  DEFAULT_HOSPITAL_FILE,
  type HospitalFile,
  type HospitalBed,
} from './seed/hospital-file.js';
export { patientIdFor } from './seed/seed-resources.js';
export type { FaultRule, FaultSettings } from './faults/fault-rules.js';
export type { ObservationCounts } from './admin/observation-counts.js';
export type { CaughtMail } from './mail/mail-catcher.js';
export type { ReceivedHl7, Hl7Counts } from './hl7/mllp-receiver.js';
export type { Occupancy, AdtEvent } from './admin/adt.js';

export interface RunningMockEhr {
  baseUrl: string;
  fhirBaseUrl: string;
  tokenUrl: string;
  httpPort: number;
  smtpPort: number;
  mllpPort: number;
  clientId: string;
  stop(): Promise<void>;
}

function listen(server: Server, port: number, host: string): Promise<number> {
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, host, () => {
      server.off('error', reject);
      resolve((server.address() as AddressInfo).port);
    });
  });
}

/** Starts the mock EHR: FHIR R4 API + token endpoint + admin API on HTTP, an SMTP catcher, an MLLP receiver. */
export async function startMockEhr(options?: MockEhrOptions): Promise<RunningMockEhr> {
  const opts = resolveOptions(options);
  const hospital = loadHospitalFile(opts.seedFile);
  for (const t of SUPPORTED_TYPES) schemaFor(t); // compile now (~2 s) rather than on the first POST

  const store = new ResourceStore();
  const adt = new Adt(store);
  const quirks = defaultQuirks();
  const reseed = () => {
    store.clear();
    for (const r of seedResources(hospital)) store.write(r as typeof r & { id: string });
    adt.reset();
  };
  reseed();

  const mail = new MailCatcher();
  const hl7 = new MllpReceiver();
  const tokens = new TokenService(opts.clientId, opts.clientSecret, opts.tokenTtlSeconds);
  const faults = new FaultInjector();
  const requests = new RequestLog();
  let httpPort = opts.httpPort;
  const urls = () => {
    const baseUrl = `http://${opts.host}:${httpPort}`;
    return { baseUrl, fhirBaseUrl: `${baseUrl}/fhir`, tokenUrl: `${baseUrl}/oauth/token` };
  };

  const server = createServer();
  let outageTimer: NodeJS.Timeout | undefined;
  let stopped = false;
  const outage = (durationMs: number) => {
    opts.logger.warn(`mock EHR: refusing HTTP connections for ${durationMs} ms`);
    server.close();
    server.closeAllConnections();
    outageTimer = setTimeout(() => {
      if (!stopped) server.listen(httpPort, opts.host, () => opts.logger.info('mock EHR: HTTP back up'));
    }, durationMs);
  };
  const app = buildApp({
    store,
    service: new ResourceService(store),
    tokens,
    faults,
    requests,
    mail,
    hl7,
    hospital,
    reseed,
    outage,
    adt,
    quirks,
    logger: opts.logger,
    urls,
  });
  server.on('request', app);

  try {
    httpPort = await listen(server, opts.httpPort, opts.host);
    const smtpPort = await mail.start(opts.host, opts.smtpPort);
    const mllpPort = await hl7.start(opts.host, opts.mllpPort);
    opts.logger.info(`mock EHR: FHIR ${urls().fhirBaseUrl}, SMTP ${opts.host}:${smtpPort}, MLLP ${opts.host}:${mllpPort}`);
    return {
      ...urls(),
      httpPort,
      smtpPort,
      mllpPort,
      clientId: opts.clientId,
      async stop() {
        stopped = true;
        clearTimeout(outageTimer);
        await Promise.all([
          new Promise<void>((resolve) => {
            if (!server.listening) return resolve();
            server.close(() => resolve());
            server.closeAllConnections();
          }),
          mail.stop(),
          hl7.stop(),
        ]);
      },
    };
  } catch (err) {
    server.close();
    await Promise.all([mail.stop(), hl7.stop()]);
    throw err;
  }
}
