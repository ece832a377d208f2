import { randomUUID } from 'node:crypto';
import type { FhirResource } from './resource-types.js';
import type { SearchRequest, SearchResult } from './search.js';

/** A FHIR R4 searchset Bundle with self and (when there are more) next links. */
export function searchsetBundle(fhirBase: string, type: string, query: URLSearchParams, req: SearchRequest, result: SearchResult): FhirResource {
  const self = `${fhirBase}/${type}${query.size ? `?${query.toString()}` : ''}`;
  const link = [{ relation: 'self', url: self }];
  const shownTo = req.offset + result.page.length;
  if (!req.summaryCount && req.count !== undefined && shownTo < result.total) {
    const next = new URLSearchParams(query);
    next.set('_offset', String(shownTo));
    link.push({ relation: 'next', url: `${fhirBase}/${type}?${next.toString()}` });
  }
  return {
    resourceType: 'Bundle',
    id: randomUUID(),
    meta: { lastUpdated: new Date().toISOString() },
    type: 'searchset',
    total: result.total,
    link,
    entry: result.page.map((r) => ({ fullUrl: `${fhirBase}/${r.resourceType}/${r.id}`, resource: r, search: { mode: 'match' } })),
  };
}

export function etagOf(r: FhirResource): string {
  return `W/"${r.meta?.versionId ?? '1'}"`;
}

export function versionedLocation(r: FhirResource): string {
  return `${r.resourceType}/${r.id}/_history/${r.meta?.versionId ?? '1'}`;
}

export const STATUS_TEXT: Record<number, string> = {
  200: 'OK',
  201: 'Created',
  400: 'Bad Request',
  404: 'Not Found',
  412: 'Precondition Failed',
  422: 'Unprocessable Entity',
};
