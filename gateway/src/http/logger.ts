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

const HL7_SEGMENT = /\b(?:MSH|PID|PD1|NK1|PV1|PV2|ORC|OBR|OBX|NTE|EVN|MSA|ERR)\|[^\r\n]*/g;
const QUOTED = /'(?:[^'\\]|\\.)*'|"(?:[^"\\]|\\.)*"|`(?:[^`\\]|\\.)*`/g;

/**
 * Text of an error without what it may quote: quoted literals (MariaDB's "Duplicate entry '…'",
 * JSON.parse's snippet of the body) and HL7 segments become placeholders; cut to 300 characters.
 */
export function scrubMessage(text: string): string {
  const out = text.replace(HL7_SEGMENT, '[HL7 segment removed]').replace(QUOTED, "'…'");
  return out.length > 300 ? `${out.slice(0, 300)}…` : out;
}

/**
 * The error serializer for every log line (`err` key): an allow-list, so nothing an error object
 * carries besides its kind reaches the log. TypeORM's QueryFailedError and mysql2's errors carry
 * the SQL text (`query`, `sql`) and its parameters (patient names, raw HL7 bodies), body-parser's
 * errors the request `body`: none of these is copied. Kept: type, code, errno, SQL state, status,
 * the scrubbed message and stack frames (the stack's first line is the message, scrubbed too),
 * and the cause, serialized the same way.
 */
export function safeError(err: unknown, depth = 0): unknown {
  if (typeof err === 'string') return scrubMessage(err);
  if (!err || typeof err !== 'object') return err;
  const e = err as {
    name?: unknown;
    constructor?: { name?: string };
    message?: unknown;
    stack?: unknown;
    code?: unknown;
    errno?: unknown;
    sqlState?: unknown;
    status?: unknown;
    statusCode?: unknown;
    cause?: unknown;
    driverError?: unknown;
  };
  const message = typeof e.message === 'string' ? scrubMessage(e.message) : undefined;
  const frames =
    typeof e.stack === 'string'
      ? e.stack
          .split('\n')
          .filter((l) => /^\s+at /.test(l))
          .slice(0, 12)
      : [];
  const type = typeof e.name === 'string' ? e.name : (e.constructor?.name ?? 'Error');
  const pick = (v: unknown) => (typeof v === 'string' || typeof v === 'number' ? (typeof v === 'string' ? v.slice(0, 64) : v) : undefined);
  const driver = e.driverError as { code?: unknown; errno?: unknown; sqlState?: unknown } | undefined;
  const out: Record<string, unknown> = {
    type,
    message,
    code: pick(e.code) ?? pick(driver?.code),
    errno: pick(e.errno) ?? pick(driver?.errno),
    sqlState: pick(e.sqlState) ?? pick(driver?.sqlState),
    status: pick(e.status) ?? pick(e.statusCode),
    stack: frames.length ? [`${type}: ${message ?? ''}`, ...frames].join('\n') : undefined,
  };
  if (e.cause !== undefined && depth < 3) out.cause = safeError(e.cause, depth + 1);
  for (const k of Object.keys(out)) if (out[k] === undefined) delete out[k];
  return out;
}

/** JSON lines to stdout, or appended to `file` (npm start keeps the terminal for people). */
export function createLogger(level: string, file?: string): Logger {
  const options = {
    level,
    redact: { paths: REDACT_PATHS, censor: '[redacted]' },
    base: { service: 'ebbgate-gateway' },
    serializers: { err: safeError, error: safeError },
  };
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
      err: safeError,
      req: (req: { id: string; method: string; url: string }) => ({ id: req.id, method: req.method, url: req.url?.split('?')[0] }),
      res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
    },
  });
}
