import { z } from 'zod';

// Answers some real FHIR servers give that are still within FHIR R4 (http.html#create): a
// Location that is absolute (with _history) rather than relative, or none at all (a 200/201 with
// no Location and, with return=minimal, no body). Set through PUT /_admin/quirks so clients can be
// tested against them.

export const quirksSchema = z.object({
  /**
   * How a created resource's location is given: standard (absolute Location header, relative
   * Bundle entry location), all relative, all absolute, or not at all.
   */
  createLocation: z.enum(['standard', 'relative', 'absolute', 'none']).default('standard'),
});
export type Quirks = z.infer<typeof quirksSchema>;

export function defaultQuirks(): Quirks {
  return { createLocation: 'standard' };
}
