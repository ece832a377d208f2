/** Problem details (RFC 9457): every error answer has type, title, status, detail, instance. */
import { Router } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../src/http/app';
import { defineRoute } from '../../src/http/route';
import { z } from 'zod';
import { startTestGateway, type TestGateway } from '../support/harness';
import type { Express } from 'express';

let gw: TestGateway;
let app: Express;
beforeAll(async () => {
  gw = await startTestGateway({ gateway: { jsonBodyLimit: '1kb' } });
  const boom = Router();
  defineRoute(boom, {
    method: 'get',
    path: '/__test/boom',
    permission: 'public',
    tag: 'test',
    summary: 'throws',
    handler: () => {
      throw new Error('kaboom');
    },
  });
  defineRoute(boom, {
    method: 'post',
    path: '/__test/echo',
    permission: 'public',
    tag: 'test',
    summary: 'validates',
    body: z.object({ n: z.number().int(), name: z.string() }),
    handler: ({ body }) => body,
  });
  app = createApp(gw.ctx, { routers: [boom] });
});
afterAll(async () => gw?.stop());

function expectProblem(res: request.Response, status: number) {
  expect(res.status).toBe(status);
  expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
  expect(res.body).toMatchObject({ status, type: expect.stringMatching(/^https?:\/\//), title: expect.any(String), instance: expect.any(String) });
}

describe('problem details', () => {
  it('400 names each bad field', async () => {
    const res = await request(app).post('/api/v1/__test/echo').send({ n: 1.5 });
    expectProblem(res, 400);
    expect(res.body.errors.map((e: { path: string }) => e.path).sort()).toEqual(['n', 'name']);
  });
  it('400 for malformed JSON', async () => {
    const res = await request(app).post('/api/v1/__test/echo').set('content-type', 'application/json').send('{"n":');
    expectProblem(res, 400);
    expect(res.body.detail).toMatch(/not valid JSON/);
  });
  it('401 without a session', async () => expectProblem(await request(gw.server).get('/api/v1/users'), 401));
  it('403 for a role without the permission', async () => {
    const reviewer = await gw.signIn('reviewer');
    expectProblem(await reviewer.get('/api/v1/users'), 403);
  });
  it('404 for an unknown route', async () => expectProblem(await request(app).get('/api/v1/no-such-thing'), 404));
  it('413 over the body size limit', async () => {
    const res = await request(app)
      .post('/api/v1/__test/echo')
      .send({ n: 1, name: 'x'.repeat(5000) });
    expectProblem(res, 413);
  });
  it('415 for a body that is not JSON', async () => {
    const res = await request(app).post('/api/v1/__test/echo').set('content-type', 'text/plain').send('n=1');
    expectProblem(res, 415);
  });
  it('500 hides the error and gives the request id', async () => {
    const res = await request(app).get('/api/v1/__test/boom').set('x-request-id', 'req-test-500');
    expectProblem(res, 500);
    expect(res.body.detail).toContain('req-test-500');
    expect(JSON.stringify(res.body)).not.toContain('kaboom');
  });
});
