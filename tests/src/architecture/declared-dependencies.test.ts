/**
 * Every package a workspace imports is declared in that workspace's package.json (hoisting in
 * node_modules would otherwise hide a missing one until the workspace is installed alone). Import
 * specifiers are read with TypeScript's own pre-processor (ts.preProcessFile), not a regex of ours.
 */
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { builtinModules } from 'node:module';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';

const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');
/** The toolchain is the root's, shared by every workspace: the test runner (vitest.config.ts runs them all) and the compiler. */
const ROOT_TOOLS = new Set(['vitest', 'typescript']);
const BUILTINS = new Set(builtinModules);

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    if (name === 'node_modules' || name === 'dist') continue;
    const p = path.join(dir, name);
    if (statSync(p).isDirectory()) out.push(...sourceFiles(p));
    else if (/\.(ts|tsx|mts)$/.test(name) && !name.endsWith('.d.ts')) out.push(p);
  }
  return out;
}

/** The package a bare specifier names (`@scope/name/sub` → `@scope/name`), or null for relative, alias and built-in imports. */
export function packageOf(specifier: string): string | null {
  if (specifier.startsWith('.') || specifier.startsWith('/') || specifier.startsWith('@/') || specifier.startsWith('node:')) return null;
  const parts = specifier.split('/');
  const name = specifier.startsWith('@') ? parts.slice(0, 2).join('/') : (parts[0] as string);
  return BUILTINS.has(name) ? null : name;
}

function undeclaredImports(workspace: string): string[] {
  const pkg = JSON.parse(readFileSync(path.join(repoRoot, workspace, 'package.json'), 'utf8')) as Record<string, Record<string, string> | undefined>;
  const declared = new Set([
    ...Object.keys(pkg.dependencies ?? {}),
    ...Object.keys(pkg.devDependencies ?? {}),
    ...Object.keys(pkg.peerDependencies ?? {}),
    ...ROOT_TOOLS,
  ]);
  const missing = new Set<string>();
  for (const file of sourceFiles(path.join(repoRoot, workspace))) {
    const text = readFileSync(file, 'utf8');
    const info = ts.preProcessFile(text, true, true);
    for (const ref of info.importedFiles) {
      // `declare module 'x'` augments a module's types (express-serve-static-core's Request): no import.
      if (text.includes(`declare module '${ref.fileName}'`)) continue;
      const name = packageOf(ref.fileName);
      if (name && !declared.has(name)) missing.add(`${name} (${path.relative(repoRoot, file)})`);
    }
  }
  return [...missing].sort();
}

describe('dependencies are declared where they are used', () => {
  it.each(['shared', 'gateway', 'admin-ui', 'mock-ehr', 'simulator', 'tests'])('%s', (workspace) => {
    expect(undeclaredImports(workspace)).toEqual([]);
  });

  it('reads package names from specifiers the way Node resolves them (negative control)', () => {
    expect(packageOf('@ebbgate/shared/analysis')).toBe('@ebbgate/shared');
    expect(packageOf('typeorm')).toBe('typeorm');
    expect(packageOf('node:fs')).toBeNull();
    expect(packageOf('crypto')).toBeNull();
    expect(packageOf('./local')).toBeNull();
    expect(packageOf('@/lib/format')).toBeNull();
    const info = ts.preProcessFile("import a from 'left-pad';\nexport { b } from '@x/y/z';\nconst c = await import('dyn');", true, true);
    expect(info.importedFiles.map((f) => packageOf(f.fileName))).toEqual(['left-pad', '@x/y', 'dyn']);
  });
});
