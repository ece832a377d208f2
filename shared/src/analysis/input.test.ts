import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { ingestBatchSchema } from '../schemas/ingest';
import { generateWindow, toCsvCapture, toIngestBatch } from '../synthetic/index';
import { analyseWindow } from './index';
import { batchToAnalysisInput, CaptureParseError, DEFAULT_CODE_ROLES, parseBatchJson, parseCsvCapture, roleForCode } from './input';

const w = generateWindow({
  seed: 31,
  heartRate: 88,
  respiratoryRate: 15,
  ppv: 13,
  channels: ['abp', 'paw'],
  durationSeconds: 30,
  disturbances: [{ kind: 'gap', start: 5, duration: 0.5 }],
});

describe('capture input', () => {
  it('maps the MDC codes of the ingest contract to roles (IEEE 11073: 150036 arterial, 150452 pleth)', () => {
    expect(roleForCode('150036')).toBe('abp');
    expect(roleForCode('MDC_PRESS_BLD_ART_ABP')).toBe('abp');
    expect(roleForCode('150452')).toBe('pleth');
    expect(roleForCode('MDC_PULS_OXIM_PLETH')).toBe('pleth');
    expect(roleForCode('PAW')).toBe('paw');
    expect(roleForCode('unknown-thing')).toBeNull();
    expect(DEFAULT_CODE_ROLES.co2).toBe('co2');
  });

  it('a synthetic window survives the ingest batch encoding (schema-valid, float32) with the same PPV to 0.01', () => {
    const batch = toIngestBatch(w, { monitorId: 'HGH-ICU-07', batchId: 'b-1', startTime: '2026-12-01T08:00:00Z' });
    expect(ingestBatchSchema.safeParse(batch).success).toBe(true);
    const input = batchToAnalysisInput(batch);
    expect(input.skipped).toEqual([]);
    expect(Number.isNaN(input.channels[0].samples[Math.round(5.2 * 125)])).toBe(true); // gap kept as NaN
    const a = analyseWindow(input).indices.ppv.value as number;
    const b = analyseWindow({ channels: w.channels }).indices.ppv.value as number;
    expect(Math.abs(a - b)).toBeLessThan(0.01);
  });

  it('skips channels with no role and names them', () => {
    const batch = toIngestBatch(w, { monitorId: 'm', batchId: 'b', startTime: '2026-12-01T08:00:00Z' });
    batch.channels[1] = { ...batch.channels[1], role: undefined, code: 'VENDOR_X' };
    expect(batchToAnalysisInput(batch).skipped).toEqual(['VENDOR_X']);
  });

  it('reads a CSV capture: roles and units from the header, rate from the time column, empty cells as gaps', () => {
    const input = parseCsvCapture(toCsvCapture(w));
    expect(input.channels.map((c) => [c.role, c.unit, c.sampleRate])).toEqual([
      ['abp', 'mmHg', 125],
      ['paw', 'cmH2O', 125],
    ]);
    expect(Number.isNaN(input.channels[0].samples[Math.round(5.2 * 125)])).toBe(true);
  });

  it('names line and column of a bad cell, a bad header and irregular time', () => {
    const bad = (text: string) => {
      try {
        parseCsvCapture(text);
      } catch (e) {
        return e as CaptureParseError;
      }
      throw new Error('no error');
    };
    const cell = bad('time,abp[mmHg]\n0,80\n0.008,eighty\n0.016,81\n');
    expect([cell.line, cell.column]).toEqual([3, 7]);
    const header = bad('time,abp[mmHg],blood\n0,1,2\n1,1,2\n2,1,2\n');
    expect([header.line, header.column]).toEqual([1, 16]);
    const time = bad('time,abp[mmHg]\n0,80\n0.008,80\n0.030,80\n0.038,80\n');
    expect(time.line).toBe(4);
    expect(time.message).toMatch(/line 4, column 1/);
  });

  it('names line and column of a JSON syntax error and of a schema error', () => {
    expect(() => parseBatchJson('{\n  "monitorId": "a",\n  oops\n}')).toThrow(/line 3, column 3/);
    expect(() => parseBatchJson('{\n "monitorId": "a",\n "batchId": 3,\n "startTime": "2026-12-01T08:00:00Z",\n "channels": []\n}')).toThrow(/line 3.*batchId/);
  });
});

describe('CLI (npm run analyse)', () => {
  const dir = mkdtempSync(join(tmpdir(), 'ebbgate-cli-'));
  const tsx = fileURLToPath(new URL('../../../node_modules/.bin/tsx', import.meta.url));
  const cli = fileURLToPath(new URL('./cli.ts', import.meta.url));
  const run = (file: string, ...flags: string[]) => execFileSync(tsx, [cli, file, ...flags], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'pipe'] });

  it('prints the full result as JSON for a CSV capture, identical on a second run', () => {
    const file = join(dir, 'capture.csv');
    writeFileSync(file, toCsvCapture(w));
    const out = run(file);
    const parsed = JSON.parse(out);
    expect(parsed.engineVersion).toBeDefined();
    expect(parsed.indices.ppv.value).toBeGreaterThan(5);
    expect(run(file)).toBe(out);
  });

  it('prints a readable summary with --pretty for a JSON batch', () => {
    const file = join(dir, 'batch.json');
    writeFileSync(file, JSON.stringify(toIngestBatch(w, { monitorId: 'm', batchId: 'b', startTime: '2026-12-01T08:00:00Z' })));
    const out = run(file, '--pretty');
    expect(out).toMatch(/Verdict: /);
    expect(out).toMatch(/PPV +\d+\.\d %/);
    expect(out).toMatch(/Cautions:/);
  });

  it('exits non-zero naming line and column for a bad file', () => {
    const file = join(dir, 'bad.csv');
    writeFileSync(file, 'time,abp[mmHg]\n0,80\n0.008,x\n');
    let stderr = '';
    try {
      run(file);
    } catch (e) {
      stderr = String((e as { stderr: string }).stderr);
    }
    expect(stderr).toMatch(/line 3, column 7/);
  });
});
