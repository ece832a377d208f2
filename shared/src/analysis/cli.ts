/**
 * `npm run analyse -- <file> [--pretty]` (alias `npm run analyze`): analyses a JSON ingest batch or
 * a CSV capture and prints the full result as JSON, or a readable summary with --pretty. A JSON
 * array of batches, or a batch with `contextChanges`, is a whole tidal volume challenge: the result
 * is printed under `tidalVolumeChallenge`, with the two windows it was judged on. The only I/O of
 * the engine.
 */
import { readFileSync } from 'node:fs';
import { analyseTidalVolumeChallenge, analyseWindow } from './index';
import { readCapture, readChallengeCapture } from './input';
import { formatChallengeSummary, formatSummary } from './summary';

function main(argv: string[]): number {
  const args = argv.filter((a) => !a.startsWith('--'));
  const pretty = argv.includes('--pretty');
  if (args.length !== 1) {
    process.stderr.write('usage: npm run analyse -- <capture.json|capture.csv> [--pretty]\n');
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
    const challenge = readChallengeCapture(text);
    if (challenge) {
      const out = analyseTidalVolumeChallenge(challenge);
      process.stdout.write(pretty ? formatChallengeSummary(out.tidalVolumeChallenge) + '\n' : JSON.stringify(out) + '\n');
      return 0;
    }
    const result = analyseWindow(readCapture(text));
    process.stdout.write(pretty ? formatSummary(result) + '\n' : JSON.stringify(result) + '\n');
    return 0;
  } catch (e) {
    process.stderr.write(`${file}: ${(e as Error).message}\n`);
    return 1;
  }
}

process.exitCode = main(process.argv.slice(2));
