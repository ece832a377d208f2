import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { FLAG_OPTIONS } from './flag-options';

// The engine README's flag table is the list of every flag the engine raises: the assessments
// filter must offer each one (the 2.0 flags were missing from it).
describe('flag filter options', () => {
  it('offer every flag in the engine README, each with a label in words', () => {
    const readme = readFileSync(path.resolve(__dirname, '../../../../../shared/src/analysis/README.md'), 'utf8');
    const table = readme.slice(readme.indexOf('## Flags'), readme.indexOf('## Tidal volume challenge'));
    const listed = [...table.matchAll(/^\| `([a-z-]+)` \|/gm)].map((m) => m[1]).sort();
    expect(listed.length).toBeGreaterThan(30);
    expect(FLAG_OPTIONS.map((o) => o.value).sort()).toEqual(listed);
    expect(FLAG_OPTIONS.find((o) => o.value === 'settings-changed')?.label).toBe('Settings changed');
  });
});
