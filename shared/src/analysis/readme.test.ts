import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';

// The engine README lists every flag with its severity, direction and source: the list of codes in
// the table must be exactly the FlagCode union in types.ts.
describe('analysis README', () => {
  it('lists every flag code, and only those', () => {
    const types = readFileSync(new URL('./types.ts', import.meta.url), 'utf8');
    const union = types.slice(types.indexOf('export type FlagCode'), types.indexOf('export interface Flag '));
    const codes = [...union.matchAll(/\|\s*'([a-z-]+)'/g)].map((m) => m[1]).sort();
    const readme = readFileSync(new URL('./README.md', import.meta.url), 'utf8');
    const table = readme.slice(readme.indexOf('## Flags'), readme.indexOf('## Tidal volume challenge'));
    const listed = [...table.matchAll(/^\| `([a-z-]+)` \|/gm)].map((m) => m[1]).sort();
    expect(codes.length).toBeGreaterThan(30);
    expect(listed).toEqual(codes);
  });
});
