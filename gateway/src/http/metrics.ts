import type { RequestHandler } from 'express';
import { Counter, Gauge, Histogram, Registry, collectDefaultMetrics } from 'prom-client';

/** One Prometheus registry per gateway app; capabilities add their own counters to it. */
export function createMetrics() {
  const registry = new Registry();
  collectDefaultMetrics({ register: registry, prefix: 'ebbgate_' });
  const httpDuration = new Histogram({
    name: 'ebbgate_http_request_duration_seconds',
    help: 'HTTP request duration by method, route and status',
    labelNames: ['method', 'route', 'status'],
    buckets: [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5],
    registers: [registry],
  });
  const middleware: RequestHandler = (req, res, next) => {
    const end = httpDuration.startTimer();
    res.on('finish', () => {
      const route = (req.route?.path as string | undefined) ?? (res.statusCode === 404 ? 'unmatched' : req.baseUrl || 'static');
      end({ method: req.method, route: `${req.baseUrl}${route === req.baseUrl ? '' : route}`, status: String(res.statusCode) });
    });
    next();
  };
  const counter = (name: string, help: string, labelNames: string[] = []) => new Counter({ name, help, labelNames, registers: [registry] });
  /** A gauge read when scraped (collect sets its values, e.g. from the database). */
  const gauge = (name: string, help: string, labelNames: string[], collect: (g: Gauge) => Promise<void>) =>
    new Gauge({
      name,
      help,
      labelNames,
      registers: [registry],
      async collect() {
        await collect(this);
      },
    });
  return { registry, middleware, counter, gauge };
}
export type Metrics = ReturnType<typeof createMetrics>;
