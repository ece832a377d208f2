/**
 * Reads a systemd unit from deploy/systemd so local launchers start a process exactly as a
 * deployment does: its Environment= lines and ExecStart= command. `/opt/ebbgate` (WorkingDirectory)
 * becomes the repository, `/usr/bin/node` the running Node; `%i` the instance name.
 * EnvironmentFile= lines are the deployment's own files and are skipped (the caller's env replaces them).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { repoRoot } from '../../gateway/src/config/load';

export interface UnitCommand {
  file: string;
  args: string[];
  env: Record<string, string>;
}

export function unitCommand(unit: string, instance = ''): UnitCommand {
  const text = readFileSync(path.join(repoRoot, 'deploy/systemd', unit), 'utf8');
  const env: Record<string, string> = {};
  let exec: string | undefined;
  for (const raw of text.split('\n')) {
    const line = raw.trim().replaceAll('%i', instance);
    if (line.startsWith('Environment=')) {
      const [k, ...v] = line.slice('Environment='.length).split('=');
      env[k!] = v.join('=');
    } else if (line.startsWith('ExecStart=')) exec = line.slice('ExecStart='.length);
  }
  if (!exec) throw new Error(`${unit}: no ExecStart=`);
  const [bin, ...rest] = exec.split(/\s+/);
  const file = bin === '/usr/bin/node' ? process.execPath : bin!;
  const args = rest.map((a) => (a.startsWith('-') || path.isAbsolute(a) ? a : path.join(repoRoot, a)));
  return { file, args, env };
}
