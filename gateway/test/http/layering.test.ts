/**
 * The HTTP layer sits below auth: auth declares routes with http's defineRoute and throws http's
 * problems, and http never imports auth (the permission table comes from @ebbgate/shared, the
 * principal type from http/principal.ts, the authenticate middleware is handed to createApp).
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { repoRoot } from '../../src/config/load';

describe('import direction between http and auth', () => {
  it('no file under gateway/src/http imports from gateway/src/auth', () => {
    const dir = path.join(repoRoot, 'gateway/src/http');
    const files = readdirSync(dir).filter((f) => f.endsWith('.ts'));
    expect(files.length).toBeGreaterThan(5);
    const offenders = files.filter((f) => /from '\.\.\/auth\//.test(readFileSync(path.join(dir, f), 'utf8')));
    expect(offenders).toEqual([]);
  });
});
