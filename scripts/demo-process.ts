/**
 * The bedside simulator as its own process (started by `npm start` and `npm run cluster`): provisions
 * the demo monitors through the gateway API and streams the demo scenario. Reads EBBGATE_GATEWAY_URL,
 * EBBGATE_MOCK_EHR_URL and EBBGATE_SPOOL_DIR; reports `{ type: 'ready', monitors }` over IPC once
 * streaming; stops on SIGINT/SIGTERM or when its launcher goes away (IPC channel closed).
 */
import { startDemo } from './lib/demo';

const env = process.env;
const need = (name: string) => {
  const v = env[name];
  if (!v) throw new Error(`simulator: ${name} is not set`);
  return v;
};

const log = (m: string) => console.log(m);
const demo = await startDemo({ gatewayUrl: need('EBBGATE_GATEWAY_URL'), mockEhrUrl: need('EBBGATE_MOCK_EHR_URL') }, need('EBBGATE_SPOOL_DIR'), log);
process.send?.({ type: 'ready' });

let stopping = false;
const stop = () => {
  if (stopping) return;
  stopping = true;
  demo.stop().then(
    () => process.exit(0),
    (err: unknown) => {
      console.error(`simulator: ${String(err)}`);
      process.exit(1);
    },
  );
};
process.once('SIGINT', stop);
process.once('SIGTERM', stop);
process.once('disconnect', stop);
