/**
 * No PHI in logs: errors from the database and from body parsing are logged through an
 * allow-list serializer, so the SQL text, its parameters (patient names, raw HL7) and request
 * bodies never reach the log. The errors here are real ones (MariaDB, TypeORM, JSON.parse).
 */
import { mkdtempSync, readFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { Router } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../src/http/app';
import { createLogger, safeError } from '../../src/http/logger';
import { startTestGateway, type TestGateway } from '../support/harness';

let gw: TestGateway;
beforeAll(async () => {
  gw = await startTestGateway();
});
afterAll(async () => gw?.stop());

const NAME = 'Quillfeather';
const MRN = 'HGH-400117';
const HL7 = `MSH|^~\\&|X|HGH|EBBGATE|HGH|20261130120000||ORU^R01|C1|P|2.6\rPID|||${MRN}^^^HGH^MR||${NAME}^Maren\r`;
/** Every spelling of the patient's name and number that a log could carry. */
const forms = (s: string) => [s, Buffer.from(s).toString('hex'), Buffer.from(s).toString('base64'), JSON.stringify([...Buffer.from(s)]).slice(1, -1)];
const expectClean = (text: string) => {
  for (const f of [...forms(NAME), ...forms(MRN)]) expect(text, f).not.toContain(f);
  expect(text).not.toMatch(/INSERT INTO|no_such_table_for_logs/);
};

/** A real QueryFailedError from MariaDB whose statement carried a patient's data. */
async function realDbError(): Promise<Error> {
  const err = await gw.ctx.ds.query('INSERT INTO no_such_table_for_logs (raw, patient) VALUES (?, ?)', [Buffer.from(HL7), `${NAME}^Maren`]).then(
    () => null,
    (e: Error) => e,
  );
  expect(err).not.toBeNull();
  expect(JSON.stringify({ ...err, message: err!.message })).toContain(NAME); // the raw error does carry it
  return err!;
}

async function logged(run: (file: string) => Promise<void>): Promise<string> {
  const file = path.join(mkdtempSync(path.join(os.tmpdir(), 'ebbgate-log-')), 'gateway.log');
  await run(file);
  await new Promise((r) => setTimeout(r, 300));
  return readFileSync(file, 'utf8');
}

describe('error serializer', () => {
  it('keeps the kind of a database error and drops its SQL and parameters', async () => {
    const err = await realDbError();
    const out = safeError(err) as Record<string, unknown>;
    expect(out).toMatchObject({ type: 'QueryFailedError', code: 'ER_NO_SUCH_TABLE', errno: 1146 });
    expect(out.sqlState).toBe('42S02');
    expectClean(JSON.stringify(out));
  });

  it('logs no PHI for database, JSON and HL7 errors written through the gateway logger', async () => {
    const text = await logged(async (file) => {
      const logger = createLogger('info', file);
      logger.error({ err: await realDbError() }, 'could not store');
      const jsonErr = (() => {
        try {
          JSON.parse(`{"patientName": "${NAME}", "mrn": "${MRN}" oops}`);
        } catch (e) {
          return e;
        }
      })();
      logger.error({ err: jsonErr }, 'bad body');
      logger.error({ err: new Error(`cannot decode segment ${HL7.split('\r')[1]}`) }, 'bad message');
      logger.error({ err: `Duplicate entry '${MRN}' for key 'patient'` }, 'as text');
      logger.flush();
    });
    expect(text.split('\n').filter(Boolean)).toHaveLength(4);
    expectClean(text);
    expect(text).toContain('ER_NO_SUCH_TABLE');
  });

  it('logs no PHI when a route fails on the database (problem handler and request log)', async () => {
    const dbErr = await realDbError();
    const text = await logged(async (file) => {
      const logger = createLogger('info', file);
      const boom = Router();
      boom.get('/phi-boom', () => {
        throw dbErr;
      });
      const app = createApp({ ...gw.ctx, logger }, { routers: [boom] });
      const res = await request(app).get(`/api/v1/phi-boom?patient=${NAME}&mrn=${MRN}`);
      expect(res.status).toBe(500);
      expectClean(JSON.stringify(res.body));
      logger.flush();
    });
    expect(text).toContain('ER_NO_SUCH_TABLE');
    expectClean(text);
  });
});
