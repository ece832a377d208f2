/** Installs Debian packages a command needs (as root, like `npm start` does for MariaDB), else says how. */
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';

export function ensureDebianPackages(needs: { pkg: string; file: string }[], log: (m: string) => void = console.log): void {
  const missing = needs.filter((n) => !existsSync(n.file)).map((n) => n.pkg);
  if (!missing.length) return;
  const command = `apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y ${missing.join(' ')}`;
  if (process.getuid?.() !== 0) throw new Error(`Missing Debian packages: ${missing.join(', ')}. Run as root:\n  sudo sh -c '${command}'`);
  log(`ebbgate: installing Debian ${missing.join(', ')} (apt-get)…`);
  execFileSync('sh', ['-c', command], { stdio: 'inherit' });
}
