import { randomUUID } from 'node:crypto';
import type { IncomingMessage } from 'node:http';
import pino, { type Logger } from 'pino';
import { pinoHttp } from 'pino-http';

/** Paths whose values never reach the log: secrets, tokens and patient identifiers. */
export const REDACT_PATHS = [
  'req.headers.authorization',
  'req.headers.cookie',
  'req.headers["x-csrf-token"]',
  'res.headers["set-cookie"]',
  '*.password',
  '*.apiKey',
  '*.token',
  '*.access_token',
  '*.client_secret',
  '*.clientSecret',
  '*.jwtSecret',
  '*.patientId',
  '*.patientName',
  '*.mrn',
  '*.birthDate',
  'patient',
];

/** JSON lines to stdout, or appended to `file` (npm start keeps the terminal for people). */
export function createLogger(level: string, file?: string): Logger {
  const options = { level, redact: { paths: REDACT_PATHS, censor: '[redacted]' }, base: { service: 'ebbgate-gateway' } };
  return file ? pino(options, pino.destination({ dest: file, mkdir: true, sync: false })) : pino(options);
}

export function httpLogger(logger: Logger) {
  return pinoHttp({
    logger,
    genReqId: (req: IncomingMessage) => {
      const given = req.headers['x-request-id'];
      return typeof given === 'string' && /^[A-Za-z0-9._-]{1,64}$/.test(given) ? given : randomUUID();
    },
    customLogLevel: (_req, res, err) => (err || res.statusCode >= 500 ? 'error' : res.statusCode >= 400 ? 'warn' : 'info'),
    autoLogging: { ignore: (req) => req.url === '/healthz' || req.url === '/metrics' },
    serializers: {
      req: (req: { id: string; method: string; url: string }) => ({ id: req.id, method: req.method, url: req.url?.split('?')[0] }),
      res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
    },
  });
}
