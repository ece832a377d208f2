/**
 * `npm run build`: compiles every runtime workspace (shared, gateway, mock-ehr, simulator, and the
 * launcher in scripts/) to JavaScript beside its sources (`<workspace>/dist`, same folder layout as
 * `src`, so paths computed from `import.meta.url` still land in the repository), with source maps,
 * and builds the console with Vite. One JavaScript file per TypeScript file (no bundling): esbuild
 * transpiles each file and rewrites relative imports to the emitted `.js` path, which Node's ESM
 * resolver needs. Workspace packages are imported at run time through the `ebbgate-dist` export
 * condition (`node --conditions=ebbgate-dist`), so tests, tsx and Vite keep reading `src`.
 * `--if-stale` builds only when a source is newer than the last build (used by `npm start`).
 */
import { existsSync, mkdirSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { build, type Plugin } from 'esbuild';
import { ensureConsoleBuilt } from './lib/console-build';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

export interface BuildTarget {
  name: string;
  /** Folder holding the TypeScript sources. */
  src: string;
  /** Folder receiving the JavaScript. */
  out: string;
  tsconfig: string;
  /** For scripts/: only these entry files (and what they import) are built. */
  only?: (file: string) => boolean;
}

const ws = (name: string): BuildTarget => ({
  name,
  src: path.join(root, name, 'src'),
  out: path.join(root, name, 'dist'),
  tsconfig: path.join(root, name, 'tsconfig.build.json'),
});

export const TARGETS: BuildTarget[] = [
  ws('shared'),
  ws('gateway'),
  ws('mock-ehr'),
  ws('simulator'),
  {
    name: 'scripts',
    src: path.join(root, 'scripts'),
    out: path.join(root, 'scripts/dist'),
    tsconfig: path.join(root, 'scripts/tsconfig.build.json'),
    // The launcher and the processes it runs; test and build helpers stay on tsx.
    only: (f) => !/(^|\/)(dist|node_modules)\//.test(f) && !/(^|\/)(build|test|lib\/test-[^/]*|lib\/vitest-[^/]*)\.ts$/.test(f),
  },
];

const isSource = (f: string) => f.endsWith('.ts') && !f.endsWith('.d.ts') && !/\.(test|spec)\.ts$/.test(f);

function sourcesOf(dir: string, skip = (_: string) => false): string[] {
  const out: string[] = [];
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    if (entry.isDirectory()) {
      if (entry.name === 'node_modules' || entry.name === 'dist' || entry.name === 'test' || entry.name === '__fixtures__') continue;
      out.push(...sourcesOf(p, skip));
    } else if (isSource(p) && !skip(p)) out.push(p);
  }
  return out;
}

function newestMtime(files: string[]): number {
  return files.reduce((m, f) => Math.max(m, statSync(f).mtimeMs), 0);
}

/** Where a source file's JavaScript lands, whichever target it belongs to. */
function outputOf(file: string): string | undefined {
  for (const t of TARGETS) {
    const rel = path.relative(t.src, file);
    if (!rel.startsWith('..') && !path.isAbsolute(rel) && !rel.startsWith('dist')) return path.join(t.out, rel).replace(/\.ts$/, '.js');
  }
  return undefined;
}

function resolveTs(fromDir: string, spec: string): string | undefined {
  const base = path.resolve(fromDir, spec);
  const stem = base.replace(/\.(js|mjs)$/, '');
  for (const c of [base, `${stem}.ts`, `${base}.ts`, path.join(base, 'index.ts')]) {
    if (c.endsWith('.ts') && existsSync(c) && statSync(c).isFile()) return c;
  }
  return undefined;
}

/** Relative imports become imports of the emitted file (with its `.js` extension); the rest stay external. */
function relativeImports(own: BuildTarget, extra: Set<string>): Plugin {
  return {
    name: 'ebbgate-relative-imports',
    setup(b) {
      b.onResolve({ filter: /.*/ }, (args) => {
        if (args.kind === 'entry-point') return undefined;
        // JSON modules are inlined (esbuild drops `with { type: 'json' }` from external imports).
        if (args.with?.type === 'json' || args.path.endsWith('.json')) return undefined;
        if (!args.path.startsWith('.')) return { path: args.path, external: true };
        const file = resolveTs(args.resolveDir, args.path);
        if (!file) return { path: args.path, external: true }; // JSON or a plain JS file: unchanged
        const target = outputOf(file);
        if (!target) throw new Error(`${args.importer}: imports ${file}, which no build target covers`);
        if (targetFor(file) === own) extra.add(file);
        const fromOut = outputOf(args.importer);
        if (!fromOut) throw new Error(`no output for ${args.importer}`);
        let rel = path.relative(path.dirname(fromOut), target).split(path.sep).join('/');
        if (!rel.startsWith('.')) rel = `./${rel}`;
        return { path: rel, external: true };
      });
    },
  };
}

function targetFor(file: string): BuildTarget | undefined {
  return TARGETS.find((t) => isWithin(t, file));
}

function isWithin(t: BuildTarget | undefined, file: string): boolean {
  if (!t) return false;
  const rel = path.relative(t.src, file);
  return !rel.startsWith('..') && !path.isAbsolute(rel);
}

async function buildTarget(t: BuildTarget, entries: string[], done = new Set(entries)): Promise<void> {
  const extra = new Set<string>();
  await build({
    entryPoints: entries,
    outdir: t.out,
    outbase: t.src,
    bundle: true, // needed for onResolve to see imports; every import is external, so nothing is inlined
    format: 'esm',
    platform: 'node',
    target: 'node20',
    sourcemap: true,
    sourcesContent: false,
    tsconfig: t.tsconfig,
    logLevel: 'warning',
    plugins: [relativeImports(t, extra)],
  });
  // A file of this target left out by `only` but imported by an entry is built too.
  const missing = [...extra].filter((f) => !done.has(f));
  for (const f of missing) done.add(f);
  if (missing.length) await buildTarget(t, missing, done);
}

export function buildStamp(t: BuildTarget): string {
  return path.join(t.out, '.build-stamp');
}

/** True when some source of a runtime workspace is newer than its last build. */
export function buildIsStale(): boolean {
  return TARGETS.some((t) => {
    const stamp = buildStamp(t);
    if (!existsSync(stamp)) return true;
    return newestMtime(sourcesOf(t.src, t.only ? (f) => !t.only!(f) : undefined)) > statSync(stamp).mtimeMs;
  });
}

export async function buildAll(log: (m: string) => void = console.log, names?: string[]): Promise<void> {
  const started = Date.now();
  for (const t of TARGETS) {
    if (names && !names.includes(t.name)) continue;
    // Overwritten in place, not emptied first: a running process (npm start, a test) keeps its files.
    const entries = sourcesOf(t.src, t.only ? (f) => !t.only!(f) : undefined);
    await buildTarget(t, entries);
    mkdirSync(t.out, { recursive: true });
    writeFileSync(buildStamp(t), `${new Date().toISOString()}\n`);
    log(`ebbgate build: ${t.name} → ${path.relative(root, t.out)} (${entries.length} files)`);
  }
  log(`ebbgate build: done in ${((Date.now() - started) / 1000).toFixed(1)} s`);
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const args = process.argv.slice(2);
  const names = args.filter((a) => !a.startsWith('--'));
  if (args.includes('--if-stale') && !buildIsStale()) {
    // up to date
  } else {
    if (args.includes('--if-stale')) console.log('ebbgate: sources changed since the last build; building (npm run build)…');
    await buildAll(console.log, names.length ? names : undefined);
  }
  if (!names.length || names.includes('admin-ui')) ensureConsoleBuilt(console.log);
}
