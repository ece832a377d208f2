import express, { type Request, type Response } from 'express';
import { z } from 'zod';
import type { TokenService } from '../auth/token-service.js';
import { faultSettingsSchema, type FaultInjector } from '../faults/fault-rules.js';
import type { ResourceStore } from '../fhir/store.js';
import type { MllpReceiver } from '../hl7/mllp-receiver.js';
import type { RequestLog } from '../http/request-log.js';
import { sendProblem } from '../http/problem.js';
import type { MailCatcher } from '../mail/mail-catcher.js';
import { mailPage } from '../mail/mail-page.js';
import type { HospitalFile } from '../seed/hospital-file.js';
import { countObservations } from './observation-counts.js';
import type { Adt } from './adt.js';
import { defaultQuirks, quirksSchema, type Quirks } from '../fhir/quirks.js';

// The mock's own control API under /_admin (no auth: loopback only, test tooling).

export interface AdminDeps {
  store: ResourceStore;
  faults: FaultInjector;
  requests: RequestLog;
  mail: MailCatcher;
  hl7: MllpReceiver;
  tokens: TokenService;
  hospital: HospitalFile;
  reseed: () => void;
  outage: (durationMs: number) => void;
  adt: Adt;
  quirks: Quirks;
}

const adtPatientSchema = z.object({
  mrn: z.string().min(1).max(32),
  family: z.string().min(1).max(64),
  given: z.array(z.string().min(1).max(64)).min(1).max(3),
  sex: z.enum(['female', 'male', 'other', 'unknown']),
  birthDate: z.string().regex(/^\d{4}-\d{2}-\d{2}$/),
});

function parseBody<T>(schema: z.ZodType<T>, req: Request, res: Response): T | undefined {
  const parsed = schema.safeParse(req.body);
  if (parsed.success) return parsed.data;
  sendProblem(res, 400, 'Invalid request body', z.prettifyError(parsed.error));
  return undefined;
}

export function adminRouter(d: AdminDeps): express.Router {
  const r = express.Router();
  r.use('/_admin', express.json());

  r.get('/_admin/faults', (_req, res) => void res.json(d.faults.view()));
  r.put('/_admin/faults', (req, res) => {
    const settings = parseBody(faultSettingsSchema, req, res);
    if (!settings) return;
    d.faults.set(settings);
    res.json(d.faults.view());
  });
  r.delete('/_admin/faults', (_req, res) => {
    d.faults.clear();
    res.status(204).end();
  });

  r.post('/_admin/reset', (_req, res) => {
    d.faults.clear();
    d.requests.clear();
    d.mail.clear();
    d.hl7.clear();
    d.reseed();
    Object.assign(d.quirks, defaultQuirks());
    res.status(204).end();
  });

  r.post('/_admin/outage', (req, res) => {
    const body = parseBody(z.object({ durationMs: z.number().int().min(1).max(600_000) }), req, res);
    if (!body) return;
    res.status(202).json({ refusingConnectionsForMs: body.durationMs });
    res.on('finish', () => d.outage(body.durationMs));
  });

  r.post('/_admin/tokens/revoke', (_req, res) => {
    d.tokens.revokeAll();
    res.status(204).end();
  });

  r.get('/_admin/observations', (_req, res) => void res.json(countObservations(d.store)));
  r.get('/_admin/hospital', (_req, res) => void res.json(d.hospital));

  r.get('/_admin/requests', (req, res) => {
    const limit = z.coerce
      .number()
      .int()
      .min(1)
      .max(1000)
      .default(100)
      .safeParse(req.query.limit ?? undefined);
    if (!limit.success) return sendProblem(res, 400, 'Invalid limit', 'limit must be an integer from 1 to 1000');
    res.json(d.requests.last(limit.data));
  });

  // ADT-style changes (a transfer, a discharge, an admission) and the occupancy log they keep.
  r.get('/_admin/adt', (_req, res) => void res.json(d.adt.view()));
  r.post('/_admin/adt/transfer', (req, res) => {
    const body = parseBody(z.object({ from: z.string().min(1), to: z.string().min(1) }), req, res);
    if (body) res.status(201).json(d.adt.transfer(body.from, body.to));
  });
  r.post('/_admin/adt/discharge', (req, res) => {
    const body = parseBody(z.object({ location: z.string().min(1) }), req, res);
    if (body) res.status(201).json(d.adt.discharge(body.location));
  });
  r.post('/_admin/adt/admit', (req, res) => {
    const body = parseBody(z.object({ location: z.string().min(1), patient: adtPatientSchema }), req, res);
    if (body) res.status(201).json(d.adt.admit(body.location, body.patient));
  });

  r.get('/_admin/quirks', (_req, res) => void res.json(d.quirks));
  r.put('/_admin/quirks', (req, res) => {
    const q = parseBody(quirksSchema, req, res);
    if (!q) return;
    Object.assign(d.quirks, q);
    res.json(d.quirks);
  });

  r.get('/_admin/hl7', (_req, res) => void res.json(d.hl7.list()));
  r.get('/_admin/hl7/counts', (_req, res) => void res.json(d.hl7.counts()));
  r.put('/_admin/hl7/ack-delay', (req, res) => {
    const body = parseBody(z.object({ ms: z.number().int().min(0).max(120_000) }), req, res);
    if (!body) return;
    d.hl7.setAckDelay(body.ms);
    res.status(204).end();
  });
  r.delete('/_admin/hl7', (_req, res) => {
    d.hl7.clear();
    res.status(204).end();
  });

  r.get('/_admin/mail', (_req, res) => void res.json(d.mail.list()));
  r.delete('/_admin/mail', (_req, res) => {
    d.mail.clear();
    res.status(204).end();
  });
  r.get('/mail', (_req, res) => void res.type('html').send(mailPage(d.mail.list())));

  r.use('/_admin', (req, res) => sendProblem(res, 404, 'Not found', `${req.method} ${req.originalUrl} is not an admin route`));
  return r;
}
