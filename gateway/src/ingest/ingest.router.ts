import cookieParser from 'cookie-parser';
import express, { Router, type RequestHandler } from 'express';
import { ingestReceiptSchema, type IngestReceipt } from '@ebbgate/shared';
import type { AppContext } from '../app-context';
import { authenticate } from '../auth/auth.middleware';
import { HttpProblem } from '../http/problem';
import { defineRoute } from '../http/route';
import { decodeJsonBatch } from './decoded-batch';
import { plainAddress } from './sender';
import type { IngestOutcome, IngestService } from './ingest.service';
import type { IngestRefusal } from './refusal';

const STATUS: Record<IngestRefusal['kind'], [number, string]> = {
  invalid: [400, 'Bad request'],
  unmapped: [422, 'Unprocessable content'],
  conflict: [409, 'Conflict'],
  'too-large': [413, 'Payload too large'],
  backlog: [429, 'Too many requests'],
  unavailable: [503, 'Service unavailable'],
  unauthorized: [403, 'Forbidden'],
  conflicting: [409, 'Conflict'],
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
    headers: r.transient ? { 'Retry-After': String(retryAfterSeconds) } : undefined,
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

/** The gateway's own trouble while ingesting (storage away): 503 with Retry-After, never a fault of the batch. */
function unavailable(retryAfterSeconds: number): HttpProblem {
  return new HttpProblem(503, 'Service unavailable', 'The gateway cannot store batches right now; keep this batch and send it again.', {
    headers: { 'Retry-After': String(retryAfterSeconds) },
  });
}

/**
 * Reads the body as raw bytes (so every message can be kept as received, even unparseable
 * ones); an over-size body is recorded as rejected before the 413 goes out.
 */
function rawBody(ctx: AppContext, service: IngestService): RequestHandler {
  const parse = express.raw({ type: () => true, limit: ctx.config.ingest.maxBatchBytes });
  return (req, res, next) => {
    parse(req, res, (err?: unknown) => {
      const e = err as { type?: string } | undefined;
      if (e?.type !== 'entity.too.large') return next(err);
      const principal = req.principal?.kind === 'device' ? req.principal : undefined;
      service
        .keepRefused({
          transport: 'http',
          receivedAt: new Date(),
          outcome: 'rejected',
          reason: `Body of ${req.headers['content-length'] ?? 'unknown'} bytes is over the limit of ${ctx.config.ingest.maxBatchBytes} bytes; not read.`,
          raw: Buffer.alloc(0),
          sizeBytes: Number(req.headers['content-length'] ?? 0) || 0,
          monitorId: principal?.monitorId ?? null,
          monitorIdentifier: principal?.monitorIdentifier ?? null,
          sender: principal ? `api-key:${principal.monitorIdentifier}` : null,
          sourceAddress: plainAddress(req.ip),
        })
        .then(
          () => next(err),
          () => next(err),
        );
    });
  };
}

/**
 * Lets an authentication failure through, so a batch sent with an unknown, revoked or missing
 * key is still kept (as a stranger's prefix) before the 401 goes out. Storage trouble while
 * checking the key is the gateway's, answered 503 with Retry-After.
 */
function authenticateKeepingFailures(ctx: AppContext): RequestHandler {
  const auth = authenticate(ctx);
  return (req, res, next) =>
    auth(req, res, (err?: unknown) => {
      if (err instanceof HttpProblem && err.status === 401) {
        res.locals.authFailure = err;
        return next();
      }
      if (err && !(err instanceof HttpProblem)) return next(unavailable(ctx.config.ingest.retryAfterSeconds));
      next(err);
    });
}

/**
 * A caller without a device key is a stranger: only the first `strangers.keepBytes` of its body
 * are read and kept (rate-limited per source), the rest is never read, and the connection closes
 * after the 401 (403 for a signed-in person).
 */
function keepRefusedCallers(ctx: AppContext, service: IngestService): RequestHandler {
  return (req, res, next) => {
    if (req.principal?.kind === 'device') return next();
    const failure = res.locals.authFailure as HttpProblem | undefined;
    const reason = failure
      ? `${failure.detail ?? failure.title} Not processed.`
      : req.principal
        ? 'Sent by a signed-in person, not a monitor API key. Not processed.'
        : 'No monitor API key (Authorization: Bearer). Not processed.';
    const answer =
      failure ??
      (req.principal
        ? new HttpProblem(403, 'Forbidden', 'Your roles do not allow this: only a monitor API key may send batches.')
        : new HttpProblem(401, 'Not signed in', 'Send the monitor API key (Authorization: Bearer).'));
    const keep = ctx.config.ingest.strangers.keepBytes;
    const chunks: Buffer[] = [];
    let kept = 0;
    let seen = 0;
    let done = false;
    const finish = () => {
      if (done) return;
      done = true;
      req.off('data', onData);
      req.off('end', finish);
      req.pause();
      const declared = Number(req.headers['content-length']);
      res.setHeader('Connection', 'close');
      service
        .keepStranger({
          transport: 'http',
          receivedAt: new Date(),
          reason,
          raw: Buffer.concat(chunks, kept),
          sizeBytes: Number.isFinite(declared) && declared > seen ? declared : seen,
          sourceAddress: plainAddress(req.ip),
        })
        .then(
          () => next(answer),
          (recordErr: unknown) => {
            ctx.logger.error({ err: (recordErr as Error).name }, 'could not keep a stranger batch');
            next(answer);
          },
        );
    };
    const onData = (c: Buffer) => {
      seen += c.length;
      if (kept < keep) {
        const part = c.subarray(0, keep - kept);
        chunks.push(part);
        kept += part.length;
      }
      if (kept >= keep) finish();
    };
    if (keep === 0 || req.readableEnded) return finish();
    req.on('data', onData);
    req.on('end', finish);
  };
}

/** POST /ingest/batches: mounted before the JSON parser (see Capabilities.rawBodyRouters). */
export function ingestRouter(ctx: AppContext, service: IngestService): Router {
  const router = Router();
  // Authentication and the keeping of strangers' prefixes run ahead of the route (and of its
  // permission check), so a refused caller's message is kept before the 401/403 goes out.
  // Cookies are parsed so a signed-in person gets 403 (wrong role) rather than 401.
  const identify = [cookieParser(), authenticateKeepingFailures(ctx), keepRefusedCallers(ctx, service)];
  router.post('/ingest/batches', ...identify);
  defineRoute(router, {
    method: 'post',
    path: '/ingest/batches',
    permission: 'ingest.write',
    tag: 'ingest',
    summary:
      'Send one waveform batch (IngestBatch: monitorId, batchId, startTime, channels, context) with the monitor API key. 202 stored, 200 repeat of the same batch, 409 same batch id with other content or a second stream overlapping another sender, 400/422 kept in quarantine, 413 too large, 429 backlog full or the monitor over its quota, 503 storage unavailable (both with Retry-After: send again).',
    before: [rawBody(ctx, service)],
    bodyType: 'application/json',
    response: ingestReceiptSchema,
    handler: async ({ req, res, principal }) => {
      const device = principal?.kind === 'device' ? principal : undefined;
      const raw = Buffer.isBuffer(req.body) ? req.body : Buffer.alloc(0);
      let outcome: IngestOutcome;
      try {
        outcome = await service.ingest({
          transport: 'http',
          raw,
          receivedAt: new Date(),
          decode: decodeJsonBatch,
          authenticatedMonitor: device ? { id: device.monitorId, identifier: device.monitorIdentifier } : undefined,
          sender: device
            ? { kind: 'api-key', monitorId: device.monitorId, monitorIdentifier: device.monitorIdentifier, address: plainAddress(req.ip) }
            : undefined,
        });
      } catch (err) {
        ctx.logger.error({ err: (err as Error).name, code: (err as { code?: string }).code }, 'batch could not be stored; answered 503');
        throw unavailable(ctx.config.ingest.retryAfterSeconds);
      }
      if (outcome.refusal) throw refusalProblem(outcome, ctx.config.ingest.retryAfterSeconds);
      res.status(outcome.stored!.outcome === 'accepted' ? 202 : 200).json(toReceipt(outcome));
      return undefined;
    },
  });
  return router;
}
