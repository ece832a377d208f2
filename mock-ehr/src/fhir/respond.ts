import type { Request, Response } from 'express';
import { etagOf, versionedLocation } from './bundles.js';
import type { FhirResource } from './resource-types.js';

export const FHIR_JSON = 'application/fhir+json; charset=utf-8';

/** Writes a resource answer, honouring `Prefer: return=minimal | representation | OperationOutcome`. */
export function sendResource(req: Request, res: Response, status: number, resource: FhirResource, fhirBase: string, opts: { location?: boolean } = {}): void {
  if (resource.resourceType !== 'Bundle' && resource.meta?.versionId) {
    res.set('ETag', etagOf(resource));
    if (resource.meta.lastUpdated) res.set('Last-Modified', new Date(resource.meta.lastUpdated).toUTCString());
  }
  if (opts.location) res.set('Location', `${fhirBase}/${versionedLocation(resource)}`);
  const prefer = /return=([\w-]+)/i.exec(req.get('prefer') ?? '')?.[1]?.toLowerCase();
  res.status(status);
  if (prefer === 'minimal') return void res.end();
  if (prefer === 'operationoutcome') {
    return void res.type(FHIR_JSON).send(JSON.stringify({ resourceType: 'OperationOutcome', issue: [{ severity: 'information', code: 'informational', diagnostics: `${resource.resourceType}/${resource.id} stored` }] }));
  }
  res.type(FHIR_JSON).send(JSON.stringify(resource));
}
