import type { RequestHandler } from 'express';

// The last requests the mock EHR saw, for tests and for an operator demo (GET /_admin/requests).

export interface LoggedRequest {
  at: string;
  method: string;
  path: string;
  status: number | null;
  durationMs: number;
  fault?: string;
  /** The request ended without an answer (dropped, hung, or the client hung up). */
  unanswered?: boolean;
}

export class RequestLog {
  private entries: LoggedRequest[] = [];
  constructor(private readonly capacity = 1000) {}

  middleware(): RequestHandler {
    return (req, res, next) => {
      if (req.path.startsWith('/_admin') || req.path === '/mail') return next();
      const start = performance.now();
      const entry: LoggedRequest = { at: new Date().toISOString(), method: req.method, path: req.originalUrl, status: null, durationMs: 0 };
      let done = false;
      const finish = (answered: boolean) => {
        if (done) return;
        done = true;
        entry.durationMs = Math.round(performance.now() - start);
        entry.status = answered ? res.statusCode : null;
        if (!answered) entry.unanswered = true;
        if (res.locals.fault) entry.fault = String(res.locals.fault);
        this.push(entry);
      };
      res.on('finish', () => finish(true));
      res.on('close', () => finish(res.writableFinished));
      next();
    };
  }

  last(n: number): LoggedRequest[] {
    return this.entries.slice(-n);
  }

  clear(): void {
    this.entries = [];
  }

  private push(e: LoggedRequest): void {
    this.entries.push(e);
    if (this.entries.length > this.capacity) this.entries.splice(0, this.entries.length - this.capacity);
  }
}
