/**
 * Imports go one way only: no module may import itself back through a chain of imports, type-only
 * imports included (a type cycle still ties the layers together). The graph comes from madge, an
 * independent dependency analyser, not from our own code; each workspace is walked from its source root.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import madge from 'madge';
import { describe, expect, it } from 'vitest';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');

/** The console resolves `@/…` to its src folder; the others use relative paths and package names. */
const tsConfig = (workspace: string) => ({
  compilerOptions: { baseUrl: path.join(repoRoot, workspace), paths: { '@/*': ['./src/*'] }, moduleResolution: 'bundler', module: 'esnext', jsx: 'react-jsx' },
});

const WORKSPACES: { workspace: string; minFiles: number }[] = [
  { workspace: 'gateway', minFiles: 80 },
  { workspace: 'shared', minFiles: 40 },
  { workspace: 'admin-ui', minFiles: 80 },
  { workspace: 'simulator', minFiles: 30 },
  { workspace: 'mock-ehr', minFiles: 30 },
];

describe('import graph', () => {
  it.each(WORKSPACES)('$workspace/src has no import cycles', async ({ workspace, minFiles }) => {
    const graph = await madge(path.join(repoRoot, workspace, 'src'), {
      fileExtensions: ['ts', 'tsx'],
      tsConfig: tsConfig(workspace),
      detectiveOptions: { ts: { skipTypeImports: false }, tsx: { skipTypeImports: false } },
    });
    // The walk really saw the workspace (a wrong root would find no files and so no cycles).
    expect(Object.keys(graph.obj()).length).toBeGreaterThanOrEqual(minFiles);
    // Every in-workspace import resolved: an unresolved alias would hide the edges behind it.
    expect(graph.warnings().skipped.filter((s) => s.startsWith('.') || s.startsWith('@/'))).toEqual([]);
    expect(graph.circular().map((c) => c.join(' → '))).toEqual([]);
  });

  it('finds a cycle when there is one (negative control)', async () => {
    const { mkdtemp, writeFile, rm } = await import('node:fs/promises');
    const { tmpdir } = await import('node:os');
    const dir = await mkdtemp(path.join(tmpdir(), 'ebbgate-cycle-'));
    try {
      await writeFile(path.join(dir, 'a.ts'), "import { b } from './b';\nexport const a = () => b;\n");
      await writeFile(path.join(dir, 'b.ts'), "import type { c } from './c';\nexport const b: c = 1;\n");
      await writeFile(path.join(dir, 'c.ts'), "import { a } from './a';\nexport type c = ReturnType<typeof a> extends number ? number : number;\n");
      const graph = await madge(dir, { fileExtensions: ['ts'], detectiveOptions: { ts: { skipTypeImports: false } } });
      expect(graph.circular()).toEqual([['a.ts', 'b.ts', 'c.ts']]);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });
});
