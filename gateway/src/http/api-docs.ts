/**
 * The API reference page: Swagger UI (swagger-ui-dist, a well-known OpenAPI renderer) served as
 * static files from our own origin, so it lives under the console's strict CSP: no inline script
 * or style, no third-party host. Our page and its start-up script are files of their own.
 */
import { createRequire } from 'node:module';
import path from 'node:path';
import { Router } from 'express';

const require = createRequire(import.meta.url);
const DIST = path.dirname(require.resolve('swagger-ui-dist/package.json'));

/** Only these files of the package are served (not its demo index or the OAuth2 redirect page with inline script). */
const ASSETS: Record<string, string> = {
  'swagger-ui.css': 'text/css',
  'swagger-ui-bundle.js': 'text/javascript',
  'favicon-32x32.png': 'image/png',
};

const PAGE = `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Ebbgate API reference</title>
<link rel="icon" href="/api/docs/favicon-32x32.png">
<link rel="stylesheet" href="/api/docs/swagger-ui.css">
</head>
<body>
<noscript><p>The API reference needs JavaScript. The machine-readable description is at <a href="/api/v1/openapi.json">/api/v1/openapi.json</a> (OpenAPI 3.1).</p></noscript>
<div id="api-reference"></div>
<script src="/api/docs/swagger-ui-bundle.js"></script>
<script src="/api/docs/start.js"></script>
</body>
</html>
`;

// Reads only: trying a request uses the visitor's session cookie; changes stay in the console (CSRF).
const START = `window.ebbgateApi = SwaggerUIBundle({
  url: '/api/v1/openapi.json',
  dom_id: '#api-reference',
  deepLinking: true,
  validatorUrl: null,
  supportedSubmitMethods: ['get'],
  defaultModelsExpandDepth: 0,
});
`;

export function apiDocsRouter(): Router {
  const router = Router();
  router.get('/api/docs', (_req, res) => res.type('html').setHeader('Cache-Control', 'no-store').send(PAGE));
  router.get('/api/docs/start.js', (_req, res) => res.type('text/javascript').send(START));
  router.get('/api/docs/:asset', (req, res, next) => {
    const type = Object.hasOwn(ASSETS, req.params.asset) ? ASSETS[req.params.asset] : undefined;
    if (!type) return next();
    res.type(type).setHeader('Cache-Control', 'public, max-age=3600');
    res.sendFile(path.join(DIST, req.params.asset));
  });
  return router;
}
