/** Builds the console with Vite when its bundle is missing or older than its sources. */
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../../gateway/src/config/load';

function newestMtime(dir: string): number {
  let newest = 0;
  for (const entry of readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, entry.name);
    newest = Math.max(newest, entry.isDirectory() ? newestMtime(p) : statSync(p).mtimeMs);
  }
  return newest;
}

export function ensureConsoleBuilt(log: (m: string) => void = console.log): void {
  const ui = path.join(repoRoot, 'admin-ui');
  const index = path.join(ui, 'dist/index.html');
  const sources = Math.max(newestMtime(path.join(ui, 'src')), newestMtime(path.join(repoRoot, 'shared/src')));
  if (existsSync(index) && statSync(index).mtimeMs >= sources) return;
  log('ebbgate: building the console (vite build)…');
  execFileSync(path.join(repoRoot, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: ui, stdio: 'inherit' });
}
