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
        [ok]: spec.response ? { description: 'Success', content: { 'application/json': { schema: schemaOf(spec.response, 'output') } } } : { description: 'Success' },
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

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** A plain, readable page of the API (no scripts, so it lives with the strict CSP). */
export function renderApiPage(doc: ReturnType<typeof buildOpenApi>): string {
  const rows = Object.entries(doc.paths)
    .flatMap(([p, ops]) => Object.entries(ops).map(([m, op]) => ({ p, m, op: op as { summary: string; description: string; tags: string[]; requestBody?: unknown } })))
    .sort((a, b) => a.op.tags[0]!.localeCompare(b.op.tags[0]!) || a.p.localeCompare(b.p));
  let tag = '';
  const body = rows
    .map(({ p, m, op }) => {
      const head = op.tags[0] !== tag ? `<h2>${esc((tag = op.tags[0]!))}</h2>` : '';
      const req = op.requestBody ? `<details><summary>request body</summary><pre>${esc(JSON.stringify(op.requestBody, null, 2))}</pre></details>` : '';
      return `${head}<section><h3><code class="m">${m.toUpperCase()}</code> <code>${esc(p)}</code></h3><p>${esc(op.summary)}</p><p class="who">${esc(op.description)}</p>${req}</section>`;
    })
    .join('\n');
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><title>${esc(doc.info.title)}</title><link rel="stylesheet" href="/api/docs.css"></head><body><main><h1>${esc(doc.info.title)} <small>${esc(doc.info.version)}</small></h1><p>${esc(doc.info.description)}</p><p>Machine-readable: <a href="/api/v1/openapi.json">/api/v1/openapi.json</a> (OpenAPI 3.1). Errors are RFC 9457 problem details.</p>${body}</main></body></html>`;
}

export const API_PAGE_CSS = `body{font:14px/1.5 system-ui,sans-serif;margin:0;background:#f6f7f5;color:#1d2621}main{max-width:980px;margin:0 auto;padding:24px}h2{margin-top:32px;border-bottom:1px solid #c9d2cc;text-transform:capitalize}section{background:#fff;border:1px solid #dde3df;border-radius:6px;padding:8px 14px;margin:8px 0}h3{font-size:14px;margin:4px 0}.m{display:inline-block;min-width:56px;color:#0f5b4e}.who{color:#56625b;font-size:13px}pre{background:#f1f3f2;padding:8px;overflow:auto;font-size:12px}`;
