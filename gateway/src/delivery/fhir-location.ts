/**
 * The server id of a created resource from its Location (FHIR R4 http.html#create: "Location
 * header ... [base]/[type]/[id]/_history/[vid]"; a transaction response entry's location is the
 * same, often relative). Read as a URL, so relative, absolute, with or without _history, with a
 * query or a trailing slash all give the id; anything else gives null (then the caller searches
 * by identifier rather than guessing).
 */
const FHIR_ID = /^[A-Za-z0-9\-.]{1,64}$/;

export interface ParsedLocation {
  id: string;
  versionId: string | null;
}

export function parseResourceLocation(location: string | null | undefined, resourceType: string): ParsedLocation | null {
  if (!location || typeof location !== 'string') return null;
  let path: string;
  try {
    // A relative location is resolved against a dummy base: only its path matters.
    path = new URL(location.trim(), 'http://relative.invalid/').pathname;
  } catch {
    return null;
  }
  const parts = path
    .split('/')
    .filter(Boolean)
    .map((p) => decodeURIComponent(p));
  // The last occurrence of the type, so a base path that contains the type name cannot confuse it.
  const at = parts.lastIndexOf(resourceType);
  if (at < 0) return null;
  const id = parts[at + 1];
  if (!id || !FHIR_ID.test(id)) return null;
  const rest = parts.slice(at + 2);
  if (rest.length === 0) return { id, versionId: null };
  if (rest[0] === '_history' && rest.length === 2 && FHIR_ID.test(rest[1]!)) return { id, versionId: rest[1]! };
  return null;
}
