/**
 * The database pool has a queue limit: when every connection is busy and the queue is full, a
 * further request fails at once and the API answers 503 with Retry-After, instead of piling up
 * without bound (mysql2 pool option queueLimit).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startTestGateway, type SignedInClient, type TestGateway } from '../support/harness';

let gw: TestGateway;
let admin: SignedInClient;
beforeAll(async () => {
  gw = await startTestGateway({ database: { poolSize: 1, queueLimit: 1 } });
  admin = await gw.signIn('admin');
});
afterAll(async () => gw?.stop());

describe('database pool queue limit', () => {
  it('refuses the query beyond the queue at once, and the API answers 503 with Retry-After', async () => {
    const busy = gw.ctx.ds.query('SELECT SLEEP(1.5)'); // holds the only connection
    await new Promise((r) => setTimeout(r, 100));
    const queued = gw.ctx.ds.query('SELECT 1 AS one'); // waits in the queue (limit 1)
    const t0 = Date.now();
    const res = await admin.get('/api/v1/users');
    expect(Date.now() - t0).toBeLessThan(1000); // answered without waiting for the busy connection
    expect(res.status).toBe(503);
    expect(res.headers['content-type']).toMatch(/application\/problem\+json/);
    expect(res.headers['retry-after']).toBe('5');
    await busy;
    expect(await queued).toEqual([{ one: 1 }]);
    expect((await admin.get('/api/v1/users')).status).toBe(200); // and serves again once free
  });
});
