/** Gateway process entry: `tsx gateway/src/main.ts`. Stops gracefully on SIGINT/SIGTERM. */
import { ConfigError, loadConfig } from './config/load';
import { StartupRefused, startGateway } from './server';

try {
  const config = loadConfig();
  const gateway = await startGateway({ config, migrate: config.gateway.migrateOnStart, seedDemo: config.gateway.seedDemo });
  const shutdown = () =>
    void gateway.stop().then(
      () => process.exit(0),
      () => process.exit(1),
    );
  process.once('SIGINT', shutdown);
  process.once('SIGTERM', shutdown);
  // Started by a launcher with an IPC channel (npm start, npm run cluster): stop when it goes away.
  process.once('disconnect', shutdown);
} catch (err) {
  if (err instanceof ConfigError || err instanceof StartupRefused) {
    console.error(`ebbgate gateway: ${err.message}`);
    process.exit(2);
  }
  throw err;
}
