/**
 * Benchmark: a bed trend over 48 h of 10-s windows (17,280 assessments), server-side min/max per
 * bucket, as the API answers it (JSON and CSV) and as Chromium shows it (chart drawn, table filled).
 * Real MariaDB (private, throwaway), real gateway and console. Prints figures beside the goal;
 * nothing asserts a time. Run: npm run bench:trend
 */
import { randomUUID } from 'node:crypto';
import { cpus, loadavg } from 'node:os';
import { startTestMariaDb } from '../../scripts/lib/test-mariadb';
import { startStack } from '../src/support/stack';
import { apiSignIn } from '../src/e2e/api';
import { openBrowser, signIn } from '../src/e2e/browser';

const GOAL = { apiMs: 2000, pageMs: 5000 };
const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)]!;

const { server, adminUrl } = await startTestMariaDb();
process.env.EBBGATE_TEST_ADMIN_URL = adminUrl;
const stack = await startStack();
try {
  const ds = stack.stack.gateway.ctx.ds;
  const bedId = randomUUID();
  const monitorId = randomUUID();
  await ds.query(
    "INSERT INTO bed (id, name, unit, location_identifier, created_at, updated_at) VALUES (?, 'Bench bed', 'Bench unit', 'BENCH-1', NOW(3), NOW(3))",
    [bedId],
  );
  await ds.query(
    "INSERT INTO monitor (id, identifier, bed_id, enabled, last_seen_at, created_at, updated_at) VALUES (?, '02BE0C0000000001', ?, 1, NOW(3), NOW(3), NOW(3))",
    [monitorId, bedId],
  );
  const n = 48 * 360;
  const end = Date.now();
  const t0 = performance.now();
  for (let i = 0; i < n; i += 1000) {
    const rows = Array.from({ length: Math.min(1000, n - i) }, (_, k) => {
      const j = i + k;
      const ws = new Date(end - (n - j) * 10_000);
      const ppv = 12 + 5 * Math.sin(j / 400) + ((j * 7919) % 13) / 10;
      return [
        randomUUID(),
        monitorId,
        bedId,
        ws,
        new Date(ws.getTime() + 10_000),
        j % 97 === 0 ? 'not-valid' : j % 13 === 0 ? 'questionable' : 'valid',
        ppv,
        ppv * 0.6,
        ppv * 1.1,
        70 + (j % 20),
        16,
      ];
    });
    await ds.query(
      `INSERT INTO assessment (id, monitor_id, bed_id, window_start, window_end, engine_version, verdict, ppv, spv, delta_pop, heart_rate, respiratory_rate, flags, result, created_at) VALUES ${rows.map(() => "(?, ?, ?, ?, ?, 'bench', ?, ?, ?, ?, ?, ?, '[]', '{}', NOW(3))").join(',')}`,
      rows.flat(),
    );
  }
  console.log(
    `trend benchmark: ${n} windows (48 h of 10-s windows) seeded in ${((performance.now() - t0) / 1000).toFixed(1)} s; ${cpus().length} cores, load ${loadavg()[0]!.toFixed(2)}`,
  );
  const reviewer = await apiSignIn(stack.gatewayUrl, 'reviewer');
  const timed = async (path: string) => {
    const s = performance.now();
    const r = await fetch(`${stack.gatewayUrl}/api/v1${path}`, { headers: { cookie: reviewer.cookie } });
    const body = await r.text();
    return { ms: performance.now() - s, bytes: body.length, body };
  };
  const json: number[] = [];
  let points = 0;
  let bytes = 0;
  for (let i = 0; i < RUNS; i++) {
    const r = await timed(`/board/beds/${bedId}/trend?hours=48`);
    json.push(r.ms);
    points = (JSON.parse(r.body) as { points: unknown[] }).points.length;
    bytes = r.bytes;
  }
  const csv: number[] = [];
  for (let i = 0; i < RUNS; i++) csv.push((await timed(`/board/beds/${bedId}/trend.csv?hours=48`)).ms);
  const board: number[] = [];
  for (let i = 0; i < RUNS; i++) board.push((await timed('/board')).ms);
  console.log(
    `API trend 48 h (JSON)   median ${median(json).toFixed(0).padStart(5)} ms over ${RUNS} runs → ${points} points, ${(bytes / 1024).toFixed(0)} KiB  (goal < ${GOAL.apiMs} ms: ${median(json) < GOAL.apiMs ? 'met' : 'NOT met'})`,
  );
  console.log(`API trend 48 h (CSV)    median ${median(csv).toFixed(0).padStart(5)} ms`);
  console.log(`API board (1 bed)       median ${median(board).toFixed(0).padStart(5)} ms`);

  const browser = await openBrowser();
  try {
    await signIn(browser.page, stack.gatewayUrl, 'reviewer');
    const page: number[] = [];
    for (let i = 0; i < Math.min(3, RUNS); i++) {
      const s = performance.now();
      await browser.page.goto(`${stack.gatewayUrl}/board/beds/${bedId}?hours=48`);
      await browser.page.getByTestId('trend-chart').locator('canvas').first().waitFor();
      await browser.page.getByRole('region', { name: 'Trend values as a table' }).getByRole('row').nth(1).waitFor();
      page.push(performance.now() - s);
    }
    console.log(
      `Chromium trend 48 h     median ${median(page).toFixed(0).padStart(5)} ms from navigation to chart and table shown (goal < ${GOAL.pageMs} ms: ${median(page) < GOAL.pageMs ? 'met' : 'NOT met'})`,
    );
  } finally {
    await browser.close();
  }
} finally {
  await stack.stop();
  await server.stop();
}
