/**
 * Benchmark: samples per second of the whole analysis pipeline on one hour of 2-channel 125 Hz
 * data (arterial + airway pressure), and of the same pipeline written with NumPy/SciPy
 * (tests/bench/analysis_scipy.py, Debian python3-numpy/python3-scipy) on the same samples.
 * Prints figures only; no timed assertion. Run: npm run bench:analysis
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { analyseWindow, type AnalysisChannel } from '@ebbgate/shared/analysis';
import { generateWindow } from '@ebbgate/shared/synthetic';

const FS = 125;
const HOUR = 3600;
const WINDOW = 60;
const REPEATS = 10;

const hour = generateWindow({
  seed: 2026,
  heartRate: 88,
  respiratoryRate: 16,
  ppv: 12,
  durationSeconds: HOUR,
  sampleRate: FS,
  channels: ['abp', 'paw'],
  disturbances: [
    { kind: 'noise', level: 0.01 },
    { kind: 'ectopic', count: 40 },
  ],
});
const abp = hour.channels.find((c) => c.role === 'abp')!.samples;
const paw = hour.channels.find((c) => c.role === 'paw')!.samples;
const totalSamples = abp.length + paw.length;
const context = { tidalVolumeMl: 600, patientHeightCm: 175, patientSex: 'male' as const, ventilationMode: 'controlled' as const };

/** The gateway's workload: consecutive one-minute windows. */
function runWindows(): number {
  const per = WINDOW * FS;
  let cycles = 0;
  for (let start = 0; start + per <= abp.length; start += per) {
    const channels: AnalysisChannel[] = [
      { role: 'abp', sampleRate: FS, unit: 'mmHg', samples: abp.subarray(start, start + per) },
      { role: 'paw', sampleRate: FS, unit: 'cmH2O', samples: paw.subarray(start, start + per) },
    ];
    cycles += analyseWindow({ channels, context }).cycles.length;
  }
  return cycles;
}

/** The whole hour as one window. */
function runHour(): number {
  return analyseWindow({
    channels: [
      { role: 'abp', sampleRate: FS, unit: 'mmHg', samples: abp },
      { role: 'paw', sampleRate: FS, unit: 'cmH2O', samples: paw },
    ],
    context,
  }).cycles.length;
}

/**
 * Best of REPEATS runs after a warm-up. `seconds` is the process CPU time (user + system) of the
 * run, i.e. time on one core, which stays meaningful on a shared, busy machine; `wall` is elapsed.
 */
function best(fn: () => number): { seconds: number; wall: number; check: number } {
  fn(); // warm-up (JIT)
  let bestT = Infinity;
  let bestWall = Infinity;
  let check = 0;
  for (let r = 0; r < REPEATS; r++) {
    const c0 = process.cpuUsage();
    const t0 = process.hrtime.bigint();
    check = fn();
    const wall = Number(process.hrtime.bigint() - t0) / 1e9;
    const c = process.cpuUsage(c0);
    const cpu = (c.user + c.system) / 1e6;
    if (cpu < bestT) bestT = cpu;
    if (wall < bestWall) bestWall = wall;
  }
  return { seconds: bestT, wall: bestWall, check };
}

const win = best(runWindows);
const whole = best(runHour);
const mega = (s: number): string => (totalSamples / s / 1e6).toFixed(1);

// Same samples to the NumPy/SciPy pipeline.
const dir = mkdtempSync(join(tmpdir(), 'ebbgate-bench-'));
writeFileSync(join(dir, 'abp.f64'), Buffer.from(abp.buffer, abp.byteOffset, abp.byteLength));
writeFileSync(join(dir, 'paw.f64'), Buffer.from(paw.buffer, paw.byteOffset, paw.byteLength));
const script = fileURLToPath(new URL('./analysis_scipy.py', import.meta.url));
let py: {
  windowsSeconds: number;
  hourSeconds: number;
  windowsWall: number;
  hourWall: number;
  cyclesWindows: number;
  cyclesHour: number;
  numpy: string;
  scipy: string;
} | null = null;
try {
  py = JSON.parse(
    execFileSync('/usr/bin/python3', [script, dir, String(FS), String(WINDOW), String(REPEATS)], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'inherit'] }),
  );
} catch (e) {
  console.error(`NumPy/SciPy pipeline not run: ${(e as Error).message}`);
}

console.log(`Analysis pipeline benchmark: 1 h of abp + paw at ${FS} Hz = ${totalSamples.toLocaleString('en')} samples, best of ${REPEATS}`);
console.log(`  (CPU time of one core; wall-clock figures in brackets; load average now ${loadavg()[0].toFixed(1)} on ${cpus().length} cores)`);
console.log(
  `  TypeScript, 60 s windows  : ${(win.seconds * 1000).toFixed(1)} ms  ${mega(win.seconds)} M samples/s  [wall ${mega(win.wall)}]  (${win.check} cycles)`,
);
console.log(
  `  TypeScript, one 1 h window: ${(whole.seconds * 1000).toFixed(1)} ms  ${mega(whole.seconds)} M samples/s  [wall ${mega(whole.wall)}]  (${whole.check} cycles)`,
);
if (py) {
  console.log(
    `  NumPy ${py.numpy} / SciPy ${py.scipy}, 60 s windows  : ${(py.windowsSeconds * 1000).toFixed(1)} ms  ${mega(py.windowsSeconds)} M samples/s  [wall ${mega(py.windowsWall)}]  (${py.cyclesWindows} cycles)`,
  );
  console.log(
    `  NumPy ${py.numpy} / SciPy ${py.scipy}, one 1 h window: ${(py.hourSeconds * 1000).toFixed(1)} ms  ${mega(py.hourSeconds)} M samples/s  [wall ${mega(py.hourWall)}]  (${py.cyclesHour} cycles)`,
  );
  console.log(
    `  ratio TypeScript / SciPy: ${(py.windowsSeconds / win.seconds).toFixed(2)}× (60 s windows), ${(py.hourSeconds / whole.seconds).toFixed(2)}× (1 h window)`,
  );
}
console.log(`  OPENBLAS_CORETYPE ${process.env.OPENBLAS_CORETYPE ?? 'unset'} (the NumPy side uses BLAS for one matrix-vector product only)`);
console.log(`  goal: ≥ 20 M samples/s on one core and ahead of SciPy`);
