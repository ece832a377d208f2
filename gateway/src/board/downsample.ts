import type { TrendPoint } from '@ebbgate/shared';

type Verdict = TrendPoint['verdict'];
const SERIES = ['ppv', 'spv', 'deltaPop', 'heartRate', 'respiratoryRate'] as const;
type Series = (typeof SERIES)[number];
const WORST: Record<Verdict, number> = { valid: 0, questionable: 1, 'not-valid': 2 };

/**
 * Min/max decimation per time bucket (the classic envelope reduction for line charts): each bucket
 * of windows becomes two points, one holding every series' minimum, one its maximum, so no peak or
 * trough is averaged away. Each point links to the window that holds its PPV extreme (or the
 * bucket's first window when no window has a PPV), and carries the worst verdict in the bucket, so
 * a not-valid window is never hidden behind a valid one. Input must be in time order.
 */
export function minMaxDownsample(points: TrendPoint[], fromMs: number, bucketMs: number): TrendPoint[] {
  const out: TrendPoint[] = [];
  let i = 0;
  while (i < points.length) {
    const bucket = Math.floor((Date.parse(points[i]!.t) - fromMs) / bucketMs);
    let j = i;
    while (j < points.length && Math.floor((Date.parse(points[j]!.t) - fromMs) / bucketMs) === bucket) j++;
    const group = points.slice(i, j);
    i = j;
    if (group.length === 1) {
      out.push(group[0]!);
      continue;
    }
    const worst = group.reduce<Verdict>((w, p) => (WORST[p.verdict] > WORST[w] ? p.verdict : w), 'valid');
    const withPpv = group.filter((p) => p.ppv !== null);
    const lowSource = withPpv.length ? withPpv.reduce((a, b) => (b.ppv! < a.ppv! ? b : a)) : group[0]!;
    let highSource = withPpv.length ? withPpv.reduce((a, b) => (b.ppv! > a.ppv! ? b : a)) : group[group.length - 1]!;
    // One window holds both PPV extremes (or the only PPV): the other point takes another window's time.
    if (highSource === lowSource) highSource = lowSource === group[group.length - 1] ? group[0]! : group[group.length - 1]!;
    const extreme = (s: Series, pick: (a: number, b: number) => number) => {
      const vals = group.map((p) => p[s]).filter((v): v is number => v !== null);
      return vals.length ? vals.reduce((a, b) => pick(a, b)) : null;
    };
    const low = Object.fromEntries(SERIES.map((s) => [s, extreme(s, Math.min)])) as Record<Series, number | null>;
    const high = Object.fromEntries(SERIES.map((s) => [s, extreme(s, Math.max)])) as Record<Series, number | null>;
    // The two points keep their source windows' times, in time order.
    const [first, second] =
      Date.parse(lowSource.t) <= Date.parse(highSource.t)
        ? ([
            [lowSource, low],
            [highSource, high],
          ] as const)
        : ([
            [highSource, high],
            [lowSource, low],
          ] as const);
    const half = Math.ceil(group.length / 2);
    out.push({ t: first[0].t, assessmentId: first[0].assessmentId, verdict: worst, ...first[1], windows: half });
    out.push({ t: second[0].t, assessmentId: second[0].assessmentId, verdict: worst, ...second[1], windows: group.length - half });
  }
  return out;
}
