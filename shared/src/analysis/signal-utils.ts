/** Small numeric helpers shared by the stages (typed arrays, no allocation in loops). */

/**
 * k-th smallest of buf[0..m) by quickselect (Hoare partition); reorders buf so that buf[0..k) ≤
 * buf[k] ≤ buf(k..m).
 */
function select(buf: Float64Array, m: number, k: number): number {
  let lo = 0;
  let hi = m - 1;
  while (lo < hi) {
    const pivot = buf[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (buf[i] < pivot) i++;
      while (buf[j] > pivot) j--;
      if (i <= j) {
        const t = buf[i];
        buf[i] = buf[j];
        buf[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return buf[k];
  }
  return buf[k];
}

/** Percentiles (0–100) of the finite values, estimated from at most ~1024 evenly spaced samples. */
export function robustPercentiles(x: ArrayLike<number>, ps: number[]): number[] {
  const step = Math.max(1, Math.floor(x.length / 1024));
  const buf = new Float64Array(Math.ceil(x.length / step));
  let m = 0;
  for (let i = 0; i < x.length; i += step) {
    const v = x[i];
    if (v === v) buf[m++] = v;
  }
  if (m === 0) return ps.map(() => Number.NaN);
  return ps.map((p) => select(buf, m, Math.min(m - 1, Math.max(0, Math.round((p / 100) * (m - 1))))));
}

/**
 * Median (the mean of the two middle values for an even count), as a full sort would give it, by
 * quickselect on a copy: the middle value(s) are found without ordering the rest. With a NaN
 * present the copy is sorted instead (NaN sorts last), as before.
 */
export function median(values: ArrayLike<number>): number {
  const n = values.length;
  if (n === 0) return Number.NaN;
  const s = new Float64Array(n);
  let nan = false;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    s[i] = v;
    if (v !== v) nan = true;
  }
  const m = n >> 1;
  if (nan) {
    s.sort();
    return n % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
  }
  const upper = select(s, n, m);
  if (n % 2) return upper;
  // After the selection s[0..m) holds the m smallest values: the lower middle is their maximum.
  let lower = s[0];
  for (let i = 1; i < m; i++) if (s[i] > lower) lower = s[i];
  return (lower + upper) / 2;
}

export function mean(values: number[]): number {
  if (values.length === 0) return Number.NaN;
  let s = 0;
  for (const v of values) s += v;
  return s / values.length;
}

/** Percent variation of a set: 100 × (max − min) / ((max + min) / 2) (Michard 2000 form). */
export function percentVariation(values: number[]): number | null {
  if (values.length < 2) return null;
  let max = -Infinity;
  let min = Infinity;
  for (const v of values) {
    if (v > max) max = v;
    if (v < min) min = v;
  }
  const avg = (max + min) / 2;
  if (!(avg > 0)) return null;
  return (100 * (max - min)) / avg;
}

/** NaN/±Infinity → null so results stay valid JSON. */
export function finiteOrNull(v: number | null | undefined): number | null {
  return v === null || v === undefined || !Number.isFinite(v) ? null : v;
}

/** Index of the maximum of x in [a, b). */
export function argMax(x: ArrayLike<number>, a: number, b: number): number {
  let best = a;
  let bv = -Infinity;
  for (let i = a; i < b; i++)
    if (x[i] > bv) {
      bv = x[i];
      best = i;
    }
  return best;
}

/** Index of the minimum of x in [a, b). */
export function argMin(x: ArrayLike<number>, a: number, b: number): number {
  let best = a;
  let bv = Infinity;
  for (let i = a; i < b; i++)
    if (x[i] < bv) {
      bv = x[i];
      best = i;
    }
  return best;
}

/** Whether [a, b) overlaps any of the sorted spans. */
export function overlapsAny(spans: { startSample: number; endSample: number }[], a: number, b: number): boolean {
  for (const s of spans) {
    if (s.startSample >= b) return false;
    if (s.endSample > a) return true;
  }
  return false;
}
