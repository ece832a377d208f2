import { startMockEhr } from './index.js';

// CLI: `tsx mock-ehr/src/main.ts` starts the mock EHR on the default loopback ports (8481 HTTP,
// 2526 SMTP, 2577 MLLP); MOCK_EHR_HTTP_PORT / _SMTP_PORT / _MLLP_PORT / _SEED_FILE override.

const env = process.env;
const port = (v: string | undefined) => (v === undefined || v === '' ? undefined : Number(v));
const logger = {
  info: (m: string) => console.log(m),
  warn: (m: string) => console.warn(m),
  error: (m: string) => console.error(m),
};

const ehr = await startMockEhr({
  httpPort: port(env.MOCK_EHR_HTTP_PORT),
  smtpPort: port(env.MOCK_EHR_SMTP_PORT),
  mllpPort: port(env.MOCK_EHR_MLLP_PORT),
  seedFile: env.MOCK_EHR_SEED_FILE || undefined,
  logger,
});
console.log(`mock EHR ready: ${ehr.baseUrl} (FHIR ${ehr.fhirBaseUrl}, token ${ehr.tokenUrl}, mail page ${ehr.baseUrl}/mail)`);

let stopping = false;
// 'disconnect': started by a launcher with an IPC channel (npm start) that went away.
for (const signal of ['SIGINT', 'SIGTERM', 'disconnect'] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    ehr.stop().then(
      () => process.exit(0),
      (err: unknown) => {
        console.error(err);
        process.exit(1);
      },
    );
  });
}
