/**
 * `npm run analyze -- <file> [--pretty]`: analyses a JSON ingest batch or a CSV capture and prints
 * the full result as JSON, or a readable summary with --pretty. The only I/O of the engine.
 */
import { readFileSync } from 'node:fs';
import { analyzeWindow } from './index';
import { readCapture } from './input';
import { formatSummary } from './summary';

function main(argv: string[]): number {
  const args = argv.filter((a) => !a.startsWith('--'));
  const pretty = argv.includes('--pretty');
  if (args.length !== 1) {
    process.stderr.write('usage: npm run analyze -- <capture.json|capture.csv> [--pretty]\n');
    return 2;
  }
  const file = args[0];
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    process.stderr.write(`${file}: cannot read (${(e as Error).message})\n`);
    return 1;
  }
  try {
    const result = analyzeWindow(readCapture(text));
    process.stdout.write(pretty ? formatSummary(result) + '\n' : JSON.stringify(result) + '\n');
    return 0;
  } catch (e) {
    process.stderr.write(`${file}: ${(e as Error).message}\n`);
    return 1;
  }
}

process.exitCode = main(process.argv.slice(2));
