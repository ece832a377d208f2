import { randomBytes } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestDatabase, type TestDatabase } from '../../../scripts/lib/test-database';
import { loadConfig } from '../../src/config/load';
import { createDataSource, migrate } from '../../src/db/data-source';
import { seedDemoUsers } from '../../src/seed/demo-users';
import { StartupRefused, startGateway } from '../../src/server';

let db: TestDatabase;
beforeAll(async () => {
  db = await createTestDatabase();
  const ds = await createDataSource(db.url, 2).initialize();
  await migrate(ds);
  await seedDemoUsers(ds);
  await ds.destroy();
});
afterAll(async () => db?.drop());

describe('production guard', () => {
  it('refuses to start in production while a demo credential is unchanged', async () => {
    const config = loadConfig(
      { NODE_ENV: 'production' },
      {
        database: { url: db.url },
        auth: { jwtSecret: randomBytes(32).toString('hex') },
        gateway: { port: 0 },
        log: { level: 'silent' },
        ehr: { fhirBaseUrl: 'https://ehr.invalid/fhir', tokenUrl: 'https://ehr.invalid/oauth/token' },
      },
    );
    await expect(startGateway({ config, services: false })).rejects.toThrow(StartupRefused);
    await expect(startGateway({ config, services: false })).rejects.toThrow(/ada\.admin/);
  });
});
