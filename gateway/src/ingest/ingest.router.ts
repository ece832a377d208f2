import cookieParser from 'cookie-parser';
import express, { Router, type RequestHandler } from 'express';
import { ingestReceiptSchema, type IngestReceipt } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { authenticate } from '../auth/auth.middleware';
import { HttpProblem } from '../http/problem';
import { defineRoute } from '../http/route';
import { decodeJsonBatch } from './decoded-batch';
import { recordInbound } from './inbound-store';
import type { IngestOutcome, IngestService } from './ingest.service';
import type { IngestRefusal } from './refusal';

const STATUS: Record<IngestRefusal['kind'], [number, string]> = {
  invalid: [400, 'Bad request'],
  unmapped: [422, 'Unprocessable content'],
  conflict: [409, 'Conflict'],
  'too-large': [413, 'Payload too large'],
  backlog: [429, 'Too many requests'],
};

/** Turns a refusal into problem details that say where the message was kept. */
export function refusalProblem(outcome: IngestOutcome, retryAfterSeconds: number): HttpProblem {
  const r = outcome.refusal!;
  const [status, title] = STATUS[r.kind];
  const kept = outcome.inboundMessageId
    ? r.quarantines
      ? ` The message is kept in the inbound quarantine as ${outcome.inboundMessageId}; fix the profile and reprocess it.`
      : ` The message is kept as inbound message ${outcome.inboundMessageId}.`
    : '';
  return new HttpProblem(status, title, r.reason + kept, {
    errors: r.errors.length ? r.errors : undefined,
    headers: r.kind === 'backlog' ? { 'Retry-After': String(retryAfterSeconds) } : undefined,
  });
}

export function toReceipt(outcome: IngestOutcome): IngestReceipt {
  const s = outcome.stored!;
  return {
    inboundMessageId: s.inboundMessageId,
    batchId: s.batch.batchId,
    outcome: s.outcome,
    continuity: s.continuity,
    continuityMs: s.continuityMs,
    channels: s.channels.map((c) => ({ code: c.code, role: c.role, sampleRate: c.sampleRate, samples: c.sampleCount })),
  };
}

/**
 * Reads the body as raw bytes (so every message can be kept as received, even unparseable
 * ones); an over-size body is recorded as rejected before the 413 goes out.
 */
function rawBody(ctx: AppContext): RequestHandler {
  const parse = express.raw({ type: () => true, limit: ctx.config.ingest.maxBatchBytes });
  return (req, res, next) => {
    parse(req, res, (err?: unknown) => {
      const e = err as { type?: string } | undefined;
      if (e?.type !== 'entity.too.large') return next(err);
      const principal = req.principal?.kind === 'device' ? req.principal : undefined;
      recordInbound(ctx.ds, {
        transport: 'http',
        receivedAt: new Date(),
        outcome: 'rejected',
        reason: `Body of ${req.headers['content-length'] ?? 'unknown'} bytes is over the limit of ${ctx.config.ingest.maxBatchBytes} bytes; not read.`,
        raw: Buffer.alloc(0),
        sizeBytes: Number(req.headers['content-length'] ?? 0) || 0,
        monitorId: principal?.monitorId ?? null,
        monitorIdentifier: principal?.monitorIdentifier ?? null,
      }).then(
        () => next(err),
        (recordErr: unknown) => next(recordErr),
      );
    });
  };
}

/**
 * Lets an authentication failure through to the body reader, so a batch sent with an unknown,
 * revoked or missing key is still kept (as rejected) before the 401 goes out.
 */
function authenticateKeepingFailures(ctx: AppContext): RequestHandler {
  const auth = authenticate(ctx);
  return (req, res, next) =>
    auth(req, res, (err?: unknown) => {
      if (err instanceof HttpProblem && err.status === 401) {
        res.locals.authFailure = err;
        return next();
      }
      next(err);
    });
}

/** Keeps whatever a caller without a device key sent, then refuses it (401, or 403 for a person). */
function keepRefusedCallers(ctx: AppContext): RequestHandler {
  return (req, res, next) => {
    if (req.principal?.kind === 'device') return next();
    const failure = res.locals.authFailure as HttpProblem | undefined;
    const raw = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
    const reason = failure
      ? `${failure.detail ?? failure.title} Not processed.`
      : req.principal
        ? 'Sent by a signed-in person, not a monitor API key. Not processed.'
        : 'No monitor API key (Authorization: Bearer). Not processed.';
    recordInbound(ctx.ds, { transport: 'http', receivedAt: new Date(), outcome: 'rejected', reason, raw, sizeBytes: raw.length, monitorId: null, monitorIdentifier: null }).then(
      () => next(failure),
      (recordErr: unknown) => next(recordErr),
    );
  };
}

/** POST /ingest/batches: mounted before the JSON parser (see Capabilities.rawBodyRouters). */
export function ingestRouter(ctx: AppContext, service: IngestService): Router {
  const router = Router();
  defineRoute(router, {
    method: 'post',
    path: '/ingest/batches',
    permission: 'ingest.write',
    tag: 'ingest',
    summary:
      'Send one waveform batch (IngestBatch: monitorId, batchId, startTime, channels, context) with the monitor API key. 202 stored, 200 repeat of the same batch, 409 same batch id with other content, 400/422 kept in quarantine, 413 too large, 429 backlog full (Retry-After).',
    // Cookies are parsed so a signed-in person gets 403 (wrong role) rather than 401.
    before: [cookieParser(), authenticateKeepingFailures(ctx), rawBody(ctx), keepRefusedCallers(ctx)],
    bodyType: 'application/json',
    response: ingestReceiptSchema,
    handler: async ({ req, res, principal }) => {
      const device = principal?.kind === 'device' ? principal : undefined;
      const raw = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
      const outcome = await service.ingest({
        transport: 'http',
        raw,
        receivedAt: new Date(),
        decode: decodeJsonBatch,
        authenticatedMonitor: device ? { id: device.monitorId, identifier: device.monitorIdentifier } : undefined,
      });
      if (outcome.refusal) throw refusalProblem(outcome, ctx.config.ingest.retryAfterSeconds);
      res.status(outcome.stored!.outcome === 'accepted' ? 202 : 200).json(toReceipt(outcome));
      return undefined;
    },
  });
  return router;
}
