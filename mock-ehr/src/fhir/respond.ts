import type { Request, Response } from 'express';
import { etagOf, versionedLocation } from './bundles.js';
import type { FhirResource } from './resource-types.js';
import type { Quirks } from './quirks.js';

export const FHIR_JSON = 'application/fhir+json; charset=utf-8';

/** Writes a resource answer, honouring `Prefer: return=minimal | representation | OperationOutcome`. */
export function sendResource(
  req: Request,
  res: Response,
  status: number,
  resource: FhirResource,
  fhirBase: string,
  opts: { location?: boolean; quirks?: Quirks } = {},
): void {
  if (resource.resourceType !== 'Bundle' && resource.meta?.versionId) {
    res.set('ETag', etagOf(resource));
    if (resource.meta.lastUpdated) res.set('Last-Modified', new Date(resource.meta.lastUpdated).toUTCString());
  }
  const style = opts.quirks?.createLocation;
  if (opts.location && style !== 'none') res.set('Location', style === 'relative' ? versionedLocation(resource) : `${fhirBase}/${versionedLocation(resource)}`);
  let prefer = /return=([\w-]+)/i.exec(req.get('prefer') ?? '')?.[1]?.toLowerCase();
  // No location at all: no body either (as with return=minimal), so the client has no id from this answer.
  if (opts.location !== undefined && style === 'none' && req.method !== 'GET') prefer = 'minimal';
  res.status(status);
  if (prefer === 'minimal') return void res.end();
  if (prefer === 'operationoutcome') {
    return void res.type(FHIR_JSON).send(
      JSON.stringify({
        resourceType: 'OperationOutcome',
        issue: [{ severity: 'information', code: 'informational', diagnostics: `${resource.resourceType}/${resource.id} stored` }],
      }),
    );
  }
  res.type(FHIR_JSON).send(JSON.stringify(resource));
}
