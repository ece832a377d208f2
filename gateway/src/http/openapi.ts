import { z } from 'zod';
import { PERMISSIONS, PUBLIC } from '@ebbgate/shared';
import { problemSchema } from '@ebbgate/shared';
import { ROUTES, type RouteSpec } from './route';

function schemaOf(schema: z.ZodType | undefined, io: 'input' | 'output') {
  if (!schema) return undefined;
  try {
    return z.toJSONSchema(schema, { io, unrepresentable: 'any', target: 'draft-2020-12' });
  } catch {
    return {};
  }
}

const openApiPath = (p: string) => p.replace(/:([A-Za-z0-9_]+)/g, '{$1}');

function parameters(spec: RouteSpec) {
  const out: object[] = [];
  for (const m of spec.path.matchAll(/:([A-Za-z0-9_]+)/g)) out.push({ name: m[1], in: 'path', required: true, schema: { type: 'string' } });
  const q = schemaOf(spec.query, 'input') as { properties?: Record<string, object>; required?: string[] } | undefined;
  for (const [name, schema] of Object.entries(q?.properties ?? {})) {
    out.push({ name, in: 'query', required: q?.required?.includes(name) ?? false, schema });
  }
  return out;
}

function who(spec: RouteSpec): string {
  if (spec.permission === PUBLIC) return 'Open to anyone.';
  return `Permission \`${spec.permission}\`: ${PERMISSIONS[spec.permission].join(', ')}.`;
}

/** OpenAPI 3.1 document generated from the route declarations and their zod schemas. */
export function buildOpenApi(version: string) {
  const paths: Record<string, Record<string, object>> = {};
  const problem = { 'application/problem+json': { schema: schemaOf(problemSchema, 'output') } };
  for (const spec of ROUTES) {
    const ok = String(spec.status ?? (spec.response ? 200 : 204));
    const op: Record<string, unknown> = {
      summary: spec.summary,
      description: who(spec),
      tags: [spec.tag],
      operationId: `${spec.method}${spec.path.replace(/[^A-Za-z0-9]+(.)?/g, (_m, c: string | undefined) => (c ? c.toUpperCase() : ''))}`,
      parameters: parameters(spec),
      security: spec.permission === PUBLIC ? [] : spec.permission === 'ingest.write' ? [{ deviceKey: [] }] : [{ session: [] }],
      responses: {
        [ok]: spec.response
          ? { description: 'Success', content: { 'application/json': { schema: schemaOf(spec.response, 'output') } } }
          : { description: 'Success' },
        default: { description: 'Problem details (RFC 9457)', content: problem },
      },
    };
    if (spec.body || spec.bodyType) {
      op.requestBody = { required: true, content: { [spec.bodyType ?? 'application/json']: { schema: schemaOf(spec.body, 'input') ?? {} } } };
    }
    (paths[`/api/v1${openApiPath(spec.path)}`] ??= {})[spec.method] = op;
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'Ebbgate gateway API',
      version,
      description:
        'Waveform ingest, respiratory-variation assessments and EHR delivery. Decision support for trained clinicians only; defer to local protocols.',
    },
    servers: [{ url: '/' }],
    components: {
      securitySchemes: {
        session: { type: 'apiKey', in: 'cookie', name: 'ebbgate_session', description: 'Console session; mutations also need the X-CSRF-Token header.' },
        deviceKey: { type: 'http', scheme: 'bearer', description: "A monitor's API key." },
      },
    },
    paths,
  };
}
