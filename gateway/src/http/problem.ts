import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { Logger } from 'pino';
import { ZodError } from 'zod';
import type { Problem } from '@ebbgate/shared';
import { isDatabaseUnavailable } from '../db/unavailable';

export interface FieldError {
  path: string;
  message: string;
}

/** An expected, operational error that becomes RFC 9457 problem details. */
export class HttpProblem extends Error {
  constructor(
    readonly status: number,
    readonly title: string,
    readonly detail?: string,
    readonly extra: { errors?: FieldError[]; headers?: Record<string, string>; type?: string } = {},
  ) {
    super(detail ?? title);
    this.name = 'HttpProblem';
  }
}

export const badRequest = (detail: string, errors?: FieldError[]) => new HttpProblem(400, 'Bad request', detail, { errors });
export const unauthorized = (detail = 'Sign in first.') => new HttpProblem(401, 'Not signed in', detail);
export const forbidden = (detail = 'Your roles do not allow this.') => new HttpProblem(403, 'Forbidden', detail);
export const notFound = (what: string) => new HttpProblem(404, 'Not found', `${what} does not exist.`);
export const conflict = (detail: string) => new HttpProblem(409, 'Conflict', detail);
export const unprocessable = (detail: string, errors?: FieldError[]) => new HttpProblem(422, 'Unprocessable content', detail, { errors });

export function zodFieldErrors(err: ZodError, prefix = ''): FieldError[] {
  return err.issues.map((i) => ({
    path: [prefix, ...i.path.map(String)].filter(Boolean).join('.') || '(root)',
    message: i.message,
  }));
}

const TYPE_BASE = 'https://ebbgate.example/problems/';

function slug(title: string): string {
  return title
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-|-$/g, '');
}

function send(res: Parameters<ErrorRequestHandler>[2], problem: Problem, headers: Record<string, string> = {}) {
  for (const [k, v] of Object.entries(headers)) res.setHeader(k, v);
  res.status(problem.status).type('application/problem+json').send(JSON.stringify(problem));
}

/** Answers 404 problem details for any unmatched API route. */
export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new HttpProblem(404, 'Not found', `No route ${req.method} ${req.path}.`));
};

/** The one place where errors become responses. */
export function problemHandler(logger: Logger): ErrorRequestHandler {
  return (err, req, res, _next) => {
    if (res.headersSent) {
      req.socket.destroy();
      return;
    }
    // Without the query string: it can carry search terms such as a patient's name.
    const instance = req.originalUrl.split('?')[0];
    if (err instanceof HttpProblem) {
      if (err.status >= 500) logger.error({ err, reqId: req.id }, err.message);
      else logger.debug({ status: err.status, reqId: req.id, detail: err.detail }, err.title);
      return send(
        res,
        {
          type: err.extra.type ?? TYPE_BASE + slug(err.title),
          title: err.title,
          status: err.status,
          detail: err.detail,
          instance,
          ...(err.extra.errors ? { errors: err.extra.errors } : {}),
        },
        err.extra.headers,
      );
    }
    if (err instanceof ZodError) {
      return send(res, {
        type: TYPE_BASE + 'bad-request',
        title: 'Bad request',
        status: 400,
        detail: 'The request does not match the schema.',
        instance,
        errors: zodFieldErrors(err),
      });
    }
    // body-parser and multer errors carry a status and a type.
    const e = err as { status?: number; statusCode?: number; type?: string; code?: string; message?: string };
    const status = e.status ?? e.statusCode;
    if (status === 413 || e.code === 'LIMIT_FILE_SIZE') {
      return send(res, {
        type: TYPE_BASE + 'payload-too-large',
        title: 'Payload too large',
        status: 413,
        detail: 'The body is over the size limit.',
        instance,
      });
    }
    if (status === 400 && e.type === 'entity.parse.failed') {
      return send(res, { type: TYPE_BASE + 'bad-request', title: 'Bad request', status: 400, detail: `The body is not valid JSON: ${e.message}`, instance });
    }
    if (status === 415 || e.type === 'encoding.unsupported' || e.type === 'charset.unsupported') {
      return send(res, { type: TYPE_BASE + 'unsupported-media-type', title: 'Unsupported media type', status: 415, detail: e.message, instance });
    }
    if (status && status >= 400 && status < 500) {
      return send(res, { type: TYPE_BASE + 'bad-request', title: 'Bad request', status, detail: e.message, instance });
    }
    if (isDatabaseUnavailable(err)) {
      logger.warn({ err, reqId: req.id }, 'database unavailable; answered 503');
      return send(
        res,
        {
          type: TYPE_BASE + 'service-unavailable',
          title: 'Service unavailable',
          status: 503,
          detail: 'The database cannot take this request right now; try again shortly.',
          instance,
        },
        { 'Retry-After': '5' },
      );
    }
    logger.error({ err, reqId: req.id }, 'unhandled error');
    return send(res, {
      type: TYPE_BASE + 'internal-error',
      title: 'Internal server error',
      status: 500,
      detail: 'Something went wrong on the gateway; the error is logged with this request id: ' + String(req.id),
      instance,
    });
  };
}
