/**
 * Vitest global setup for suites that need MariaDB. Under `npm test` the runner already started
 * one (EBBGATE_TEST_ADMIN_URL is set); run alone, a suite starts its own and stops it after.
 */
import { startTestMariaDb } from './test-mariadb';

export default async function setup(): Promise<(() => Promise<void>) | void> {
  if (process.env.EBBGATE_TEST_ADMIN_URL) return;
  const { server, adminUrl } = await startTestMariaDb();
  process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
  return () => server.stop();
}
