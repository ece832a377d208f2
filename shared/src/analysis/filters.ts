/**
 * Butterworth design and zero-phase filtering, following scipy.signal's conventions
 * (butter → bilinear transform of the analog prototype with pre-warping; filtfilt/sosfiltfilt with
 * odd extension and steady-state initial conditions). Checked against SciPy fixtures in
 * `tests/reference/fixtures/`.
 */

interface Complex {
  re: number;
  im: number;
}

export type FilterType = 'lowpass' | 'highpass' | 'bandpass';

export interface Zpk {
  z: Complex[];
  p: Complex[];
  k: number;
}

/** Transfer function coefficients, a[0] = 1. */
export interface BaCoefficients {
  b: number[];
  a: number[];
}

/** Second-order sections, each `[b0, b1, b2, 1, a1, a2]` (scipy's sos layout). */
export type Sos = number[][];

const cmul = (x: Complex, y: Complex): Complex => ({ re: x.re * y.re - x.im * y.im, im: x.re * y.im + x.im * y.re });
const cdiv = (x: Complex, y: Complex): Complex => {
  const d = y.re * y.re + y.im * y.im;
  return { re: (x.re * y.re + x.im * y.im) / d, im: (x.im * y.re - x.re * y.im) / d };
};
const csqrt = (x: Complex): Complex => {
  const r = Math.hypot(x.re, x.im);
  const re = Math.sqrt((r + x.re) / 2);
  const im = Math.sign(x.im || 1) * Math.sqrt(Math.max(0, (r - x.re) / 2));
  return { re, im };
};

/** Analog Butterworth prototype poles (scipy.signal.buttap): p = −exp(jπm/2N), m = −N+1 … N−1 step 2. */
function buttap(order: number): Complex[] {
  const poles: Complex[] = [];
  for (let m = -order + 1; m < order; m += 2) {
    const theta = (Math.PI * m) / (2 * order);
    poles.push({ re: -Math.cos(theta), im: -Math.sin(theta) });
  }
  return poles;
}

function checkDesign(order: number, cutoff: number[], fs: number): void {
  if (!Number.isInteger(order) || order < 1 || order > 12) throw new RangeError(`Butterworth order must be an integer 1–12, got ${order}`);
  if (!(fs > 0)) throw new RangeError(`sample rate must be positive, got ${fs}`);
  for (const f of cutoff) {
    if (!(f > 0 && f < fs / 2)) throw new RangeError(`cutoff ${f} Hz must lie strictly between 0 and Nyquist (${fs / 2} Hz)`);
  }
}

/** Digital Butterworth zeros/poles/gain, as scipy.signal.butter(order, cutoff, btype, fs=fs, output='zpk'). */
export function butterZpk(order: number, cutoff: number | [number, number], type: FilterType, fs: number): Zpk {
  const cut = typeof cutoff === 'number' ? [cutoff] : cutoff;
  checkDesign(order, cut, fs);
  if ((type === 'bandpass') !== (cut.length === 2)) throw new RangeError('bandpass needs two cutoffs, lowpass/highpass one');
  const fs2 = 2 * fs; // bilinear transform with scipy's fs=2 normalisation folded in
  const warped = cut.map((f) => fs2 * Math.tan((Math.PI * f) / fs));
  const proto = buttap(order);
  let z: Complex[] = [];
  let p: Complex[];
  let k: number;
  if (type === 'lowpass') {
    const wo = warped[0];
    p = proto.map((q) => ({ re: q.re * wo, im: q.im * wo }));
    k = wo ** order;
  } else if (type === 'highpass') {
    const wo = warped[0];
    p = proto.map((q) => cdiv({ re: wo, im: 0 }, q));
    z = Array.from({ length: order }, () => ({ re: 0, im: 0 }));
    // k = real(prod(-z)/prod(-p)) with z = [] for the prototype
    let prod: Complex = { re: 1, im: 0 };
    for (const q of proto) prod = cmul(prod, { re: -q.re, im: -q.im });
    k = 1 / prod.re;
  } else {
    const [lo, hi] = warped;
    const bw = hi - lo;
    const wo = Math.sqrt(lo * hi);
    p = [];
    const second: Complex[] = [];
    for (const q of proto) {
      const pl = { re: (q.re * bw) / 2, im: (q.im * bw) / 2 };
      const root = csqrt({ re: pl.re * pl.re - pl.im * pl.im - wo * wo, im: 2 * pl.re * pl.im });
      p.push({ re: pl.re + root.re, im: pl.im + root.im });
      second.push({ re: pl.re - root.re, im: pl.im - root.im });
    }
    p = p.concat(second);
    z = Array.from({ length: order }, () => ({ re: 0, im: 0 }));
    k = bw ** order;
  }
  // Bilinear transform (scipy.signal.bilinear_zpk).
  let num: Complex = { re: 1, im: 0 };
  let den: Complex = { re: 1, im: 0 };
  for (const q of z) num = cmul(num, { re: fs2 - q.re, im: -q.im });
  for (const q of p) den = cmul(den, { re: fs2 - q.re, im: -q.im });
  const kz = k * cdiv(num, den).re;
  const zz = z.map((q) => cdiv({ re: fs2 + q.re, im: q.im }, { re: fs2 - q.re, im: -q.im }));
  const pz = p.map((q) => cdiv({ re: fs2 + q.re, im: q.im }, { re: fs2 - q.re, im: -q.im }));
  while (zz.length < pz.length) zz.push({ re: -1, im: 0 });
  return { z: zz, p: pz, k: kz };
}

function poly(roots: Complex[]): number[] {
  let c: Complex[] = [{ re: 1, im: 0 }];
  for (const r of roots) {
    const next: Complex[] = c.map((x) => ({ ...x })).concat([{ re: 0, im: 0 }]);
    for (let i = 1; i < next.length; i++) {
      const t = cmul(c[i - 1], r);
      next[i] = { re: next[i].re - t.re, im: next[i].im - t.im };
    }
    c = next;
  }
  return c.map((x) => x.re);
}

/** Butterworth as (b, a), like scipy.signal.butter(order, cutoff, btype, fs=fs). */
export function butter(order: number, cutoff: number | [number, number], type: FilterType, fs: number): BaCoefficients {
  const { z, p, k } = butterZpk(order, cutoff, type, fs);
  return { b: poly(z).map((v) => v * k), a: poly(p) };
}

const sosCache = new Map<string, Sos>();

/**
 * Butterworth sections for repeated use (the engine designs the same few filters for every
 * window); the returned sections are shared and must not be modified.
 */
export function cachedButterSos(order: number, cutoff: number | [number, number], type: FilterType, fs: number): Sos {
  const key = `${order}|${String(cutoff)}|${type}|${fs}`;
  let sos = sosCache.get(key);
  if (!sos) {
    sos = butterSos(order, cutoff, type, fs);
    if (sosCache.size > 64) sosCache.clear();
    sosCache.set(key, sos);
  }
  return sos;
}

/**
 * Butterworth as second-order sections. Section pairing differs from scipy's zpk2sos, but the
 * cascade is the same filter; sosfiltfilt output matches scipy's to rounding.
 */
export function butterSos(order: number, cutoff: number | [number, number], type: FilterType, fs: number): Sos {
  const { z, p, k } = butterZpk(order, cutoff, type, fs);
  const upper = p.filter((q) => q.im > 1e-12).sort((x, y) => x.re - y.re);
  const real = p.filter((q) => Math.abs(q.im) <= 1e-12).sort((x, y) => x.re - y.re);
  const zeros = z.map((q) => q.re).sort((x, y) => x - y); // Butterworth zeros are all ±1 (real)
  const sos: Sos = [];
  const takeZeros = (count: number): number[] => {
    // Pair one +1 with one −1 where possible so band-pass sections are [1, 0, −1].
    const picked: number[] = [];
    for (let i = 0; i < count; i++) {
      const wantPositive = i % 2 === 1;
      let idx = wantPositive ? zeros.findIndex((v) => v > 0) : zeros.findIndex((v) => v < 0);
      if (idx < 0) idx = 0;
      picked.push(zeros.splice(idx, 1)[0]);
    }
    return picked;
  };
  for (const q of upper) {
    const [z1, z2] = takeZeros(2);
    sos.push([1, -(z1 + z2), z1 * z2, 1, -2 * q.re, q.re * q.re + q.im * q.im]);
  }
  while (real.length > 0) {
    const q1 = real.shift() as Complex;
    const q2 = real.shift();
    if (q2) {
      const [z1, z2] = takeZeros(2);
      sos.push([1, -(z1 + z2), z1 * z2, 1, -(q1.re + q2.re), q1.re * q2.re]);
    } else {
      const [z1] = takeZeros(1);
      sos.push([1, -z1, 0, 1, -q1.re, 0]);
    }
  }
  for (let i = 0; i < 3; i++) sos[0][i] *= k;
  return sos;
}

/** Solves a small dense system by Gaussian elimination with partial pivoting. */
function solve(m: number[][], v: number[]): number[] {
  const n = v.length;
  const a = m.map((row, i) => [...row, v[i]]);
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(a[r][c]) > Math.abs(a[piv][c])) piv = r;
    [a[c], a[piv]] = [a[piv], a[c]];
    for (let r = c + 1; r < n; r++) {
      const f = a[r][c] / a[c][c];
      for (let j = c; j <= n; j++) a[r][j] -= f * a[c][j];
    }
  }
  const x = new Array<number>(n).fill(0);
  for (let r = n - 1; r >= 0; r--) {
    let s = a[r][n];
    for (let j = r + 1; j < n; j++) s -= a[r][j] * x[j];
    x[r] = s / a[r][r];
  }
  return x;
}

/** Steady-state initial conditions for a unit step (scipy.signal.lfilter_zi). */
export function lfilterZi(bIn: number[], aIn: number[]): number[] {
  const n = Math.max(bIn.length, aIn.length);
  const a0 = aIn[0];
  const b = [...bIn.map((v) => v / a0), ...new Array(n - bIn.length).fill(0)];
  const a = [...aIn.map((v) => v / a0), ...new Array(n - aIn.length).fill(0)];
  if (n < 2) return [];
  // IminusA = I − companion(a).T ; companion first row is −a[1:]
  const m: number[][] = [];
  for (let i = 0; i < n - 1; i++) {
    const row = new Array<number>(n - 1).fill(0);
    for (let j = 0; j < n - 1; j++) {
      const compT = j === 0 ? -a[i + 1] : i === j - 1 ? 1 : 0; // companion(a).T[i][j] = companion[j][i]
      row[j] = (i === j ? 1 : 0) - compT;
    }
    m.push(row);
  }
  const rhs = [];
  for (let i = 1; i < n; i++) rhs.push(b[i] - a[i] * b[0]);
  return solve(m, rhs);
}

/** Direct form II transposed IIR filter (scipy.signal.lfilter); `zi` is consumed and updated. */
export function lfilter(bIn: number[], aIn: number[], x: ArrayLike<number>, zi?: number[]): Float64Array {
  const n = Math.max(bIn.length, aIn.length);
  const a0 = aIn[0];
  const b = [...bIn.map((v) => v / a0), ...new Array(n - bIn.length).fill(0)];
  const a = [...aIn.map((v) => v / a0), ...new Array(n - aIn.length).fill(0)];
  const z = zi ? zi.slice() : new Array<number>(n - 1).fill(0);
  const y = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    const xi = x[i];
    const yi = b[0] * xi + (n > 1 ? z[0] : 0);
    for (let j = 0; j < n - 2; j++) z[j] = b[j + 1] * xi + z[j + 1] - a[j + 1] * yi;
    if (n > 1) z[n - 2] = b[n - 1] * xi - a[n - 1] * yi;
    y[i] = yi;
  }
  return y;
}

/** Odd extension by `edge` samples at both ends (scipy.signal._arraytools.odd_ext). */
function oddExtend(x: ArrayLike<number>, edge: number): Float64Array {
  const n = x.length;
  const out = new Float64Array(n + 2 * edge);
  const first = x[0];
  const last = x[n - 1];
  for (let i = 0; i < edge; i++) out[i] = 2 * first - x[edge - i];
  out.set(x, edge);
  for (let i = 0; i < edge; i++) out[edge + n + i] = 2 * last - x[n - 2 - i];
  return out;
}

/** Zero-phase forward–backward filtering, as scipy.signal.filtfilt(b, a, x) with its defaults. */
export function filtfilt(b: number[], a: number[], x: ArrayLike<number>): Float64Array {
  const edge = 3 * Math.max(a.length, b.length);
  if (x.length <= edge) throw new RangeError(`filtfilt needs more than ${edge} samples, got ${x.length}`);
  const ext = oddExtend(x, edge);
  const zi = lfilterZi(b, a);
  const fwd = lfilter(
    b,
    a,
    ext,
    zi.map((v) => v * ext[0]),
  );
  fwd.reverse();
  const back = lfilter(
    b,
    a,
    fwd,
    zi.map((v) => v * fwd[0]),
  );
  back.reverse();
  return back.slice(edge, edge + x.length);
}

/** Steady-state initial conditions of a section cascade (scipy.signal.sosfilt_zi). */
export function sosfiltZi(sos: Sos): number[][] {
  let scale = 1;
  return sos.map((s) => {
    const b = s.slice(0, 3);
    const a = s.slice(3, 6);
    const zi = lfilterZi(b, a).map((v) => v * scale);
    scale *= (b[0] + b[1] + b[2]) / (a[0] + a[1] + a[2]);
    return zi;
  });
}

/**
 * One biquad section over `buf` in place (direct form II transposed), from initial state zi × x0;
 * `backward` runs from the last sample to the first (saves reversing the buffer twice).
 */
function sectionInPlace(sec: number[], zi: number[], x0: number, buf: Float64Array, backward: boolean): void {
  const [b0, b1, b2, , a1, a2] = sec;
  let z0 = zi[0] * x0;
  let z1 = zi[1] * x0;
  const n = buf.length;
  const step = backward ? -1 : 1;
  for (let k = 0, i = backward ? n - 1 : 0; k < n; k++, i += step) {
    const xi = buf[i];
    const yi = b0 * xi + z0;
    z0 = b1 * xi - a1 * yi + z1;
    z1 = b2 * xi - a2 * yi;
    buf[i] = yi;
  }
}

/**
 * One section of each of two cascades over two buffers of equal length, in one loop. Each
 * recursion does exactly what sectionInPlace does; a biquad is bound by the latency of its own
 * feedback, so the processor runs the second, independent one in the gaps of the first.
 */
function sectionPairInPlace(
  secP: number[],
  ziP: number[],
  x0P: number,
  p: Float64Array,
  secQ: number[],
  ziQ: number[],
  x0Q: number,
  q: Float64Array,
  backward: boolean,
): void {
  const [b0, b1, b2, , a1, a2] = secP;
  const [c0, c1, c2, , d1, d2] = secQ;
  let z0 = ziP[0] * x0P;
  let z1 = ziP[1] * x0P;
  let w0 = ziQ[0] * x0Q;
  let w1 = ziQ[1] * x0Q;
  const n = p.length;
  const step = backward ? -1 : 1;
  for (let k = 0, i = backward ? n - 1 : 0; k < n; k++, i += step) {
    const xi = p[i];
    const yi = b0 * xi + z0;
    z0 = b1 * xi - a1 * yi + z1;
    z1 = b2 * xi - a2 * yi;
    p[i] = yi;
    const ui = q[i];
    const vi = c0 * ui + w0;
    w0 = c1 * ui - d1 * vi + w1;
    w1 = c2 * ui - d2 * vi;
    q[i] = vi;
  }
}

/** A signal prepared for sosfiltfilt: its sections, their initial states, the padded buffer. */
export interface FiltfiltJob {
  sos: Sos;
  zi: number[][];
  ext: Float64Array;
  edge: number;
  length: number;
}

/** Both passes of one job, or of two jobs of equal padded length section by section together. */
function runPasses(p: FiltfiltJob, q: FiltfiltJob | null): void {
  for (const backward of [false, true]) {
    // Initial states scale with the first sample the pass reads (scipy's sosfiltfilt).
    const x0P = p.ext[backward ? p.ext.length - 1 : 0];
    const x0Q = q ? q.ext[backward ? q.ext.length - 1 : 0] : 0;
    const sections = Math.max(p.sos.length, q ? q.sos.length : 0);
    for (let s = 0; s < sections; s++) {
      const inP = s < p.sos.length;
      const inQ = q !== null && s < q.sos.length;
      if (inP && inQ) sectionPairInPlace(p.sos[s], p.zi[s], x0P, p.ext, q.sos[s], q.zi[s], x0Q, q.ext, backward);
      else if (inP) sectionInPlace(p.sos[s], p.zi[s], x0P, p.ext, backward);
      else if (inQ) sectionInPlace(q.sos[s], q.zi[s], x0Q, q.ext, backward);
    }
  }
}

/** Padding length scipy.signal.sosfiltfilt uses by default. */
export function sosPadLength(sos: Sos): number {
  let ntaps = 2 * sos.length + 1;
  const zerosB2 = sos.filter((s) => s[2] === 0).length;
  const zerosA2 = sos.filter((s) => s[5] === 0).length;
  ntaps -= Math.min(zerosB2, zerosA2);
  return 3 * ntaps;
}

const ziCache = new WeakMap<Sos, number[][]>();

/** Checks and pads a signal for sosfiltfilt (throws RangeError when it is too short); runFiltfiltJobs filters it. */
export function filtfiltJob(sos: Sos, x: ArrayLike<number>): FiltfiltJob {
  const edge = sosPadLength(sos);
  if (x.length <= edge) throw new RangeError(`sosfiltfilt needs more than ${edge} samples, got ${x.length}`);
  let zi = ziCache.get(sos);
  if (!zi) {
    zi = sosfiltZi(sos);
    ziCache.set(sos, zi);
  }
  return { sos, zi, ext: oddExtend(x, edge), edge, length: x.length };
}

/**
 * Runs prepared sosfiltfilt jobs, each with its own sections; the results are those of sosfiltfilt
 * on each signal, bit for bit. Jobs of equal padded length (the channels of one window) are
 * filtered two at a time, which takes little more than the time of one.
 */
export function runFiltfiltJobs(jobs: FiltfiltJob[]): Float64Array[] {
  const paired = new Uint8Array(jobs.length);
  for (let a = 0; a < jobs.length; a++) {
    if (paired[a]) continue;
    let b = a + 1;
    while (b < jobs.length && (paired[b] || jobs[b].ext.length !== jobs[a].ext.length)) b++;
    if (b < jobs.length) paired[b] = 1;
    runPasses(jobs[a], b < jobs.length ? jobs[b] : null);
  }
  return jobs.map((j) => j.ext.subarray(j.edge, j.edge + j.length));
}

/** Zero-phase forward–backward section filtering, as scipy.signal.sosfiltfilt(sos, x). */
export function sosfiltfilt(sos: Sos, x: ArrayLike<number>): Float64Array {
  return runFiltfiltJobs([filtfiltJob(sos, x)])[0];
}
