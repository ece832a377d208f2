#!/usr/bin/python3
"""Benchmark-only: the Ebbgate analysis pipeline written with NumPy/SciPy (Debian packages).

Same stages as shared/src/analysis on the same samples: unit scaling and gap bridging, flat-line
and clipping runs, zero-phase Butterworth low-pass (sosfiltfilt), Zong 2003 slope sum function
with its adaptive threshold, Sun 2006 beat rules, template correlation, interval check, notch
check, breaths from airway pressure, per-cycle PPV over the last three usable cycles.
Usage: analysis_scipy.py DIR FS WINDOW_SECONDS REPEATS  (DIR holds abp.f64 and paw.f64)
Prints one JSON line with timings. Not used by any test.
"""
import json
import os
import sys
import time

import numpy as np
import scipy
from scipy import ndimage, signal


def condition(x, fs, cutoff, pulsatile):
    x = np.asarray(x, dtype=np.float64)
    bad = ~np.isfinite(x)
    filled = x.copy()
    if bad.any():
        good = np.flatnonzero(~bad)
        filled[bad] = np.interp(np.flatnonzero(bad), good, x[good])
    lo, hi = np.percentile(filled[:: max(1, len(x) // 1024)], [1, 99])
    tol = max(0.005 * (hi - lo), 1e-9)
    min_flat = int(round((2 if pulsatile else 20) * fs))
    if len(x) > min_flat:
        rng = ndimage.maximum_filter1d(filled, min_flat) - ndimage.minimum_filter1d(filled, min_flat)
        flat = rng <= tol
    else:
        flat = np.zeros(len(x), bool)
    clip_runs = 0
    if pulsatile:
        at_max = filled == filled.max()
        edges = np.diff(np.concatenate(([0], at_max.astype(np.int8), [0])))
        starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
        clip_runs = int(np.sum(ends - starts >= 5))
    sos = signal.butter(2, cutoff, fs=fs, output="sos")
    smooth = signal.sosfiltfilt(sos, filled)
    return filled, smooth, flat, clip_runs


def zong(y, fs):
    n = len(y)
    w = int(round(0.128 * fs))
    d = np.diff(y, prepend=y[0])
    d[d < 0] = 0
    c = np.cumsum(d)
    ssf = c.copy()
    ssf[w:] = c[w:] - c[:-w]
    base = 3 * ssf[: min(n, int(8 * fs))].mean()
    refr, smax, back, pwin = int(0.25 * fs), int(0.15 * fs), int(0.15 * fs), int(0.3 * fs)
    feet, peaks, onsets = [], [], []
    i, last_peak = 1, -1
    chunk = int(2.5 * fs)
    while i < n:
        thr = base / 3
        seg = ssf[i : i + chunk] > thr
        if not seg.any():
            i += chunk
            base *= 0.5
            continue
        i += int(np.argmax(seg))
        m = i + int(np.argmax(ssf[i : i + smax]))
        base += (ssf[m] - base) / 10
        j = i
        stop = max(1, i - back)
        rise = np.diff(ssf[stop - 1 : i + 1])[::-1]
        vals = ssf[stop - 1 : i][::-1]
        okay = (rise > ssf[m] * 0.01) & (vals > ssf[m] * 0.02)
        j = i - (int(np.argmin(okay)) if not okay.all() else len(okay))
        fs0 = max(last_peak + 1, j - int(0.08 * fs), 0)
        f = fs0 + int(np.argmin(y[fs0 : i + 1]))
        p = i + int(np.argmax(y[i : i + pwin]))
        feet.append(f)
        peaks.append(p)
        onsets.append(j)
        last_peak = p
        i = max(i + refr, p + 1)
    return np.array(feet), np.array(peaks), np.array(onsets)


def qualify(filled, y, fs, feet, peaks, onsets):
    mean3 = lambda idx: (y[np.maximum(idx - 1, 0)] + y[idx] + y[np.minimum(idx + 1, len(y) - 1)]) / 3
    sbp, dbp = mean3(peaks), mean3(feet)
    pp = sbp - dbp
    mp = np.add.reduceat(y, feet) / np.diff(np.append(feet, len(y)))
    ibi = np.diff(feet, prepend=np.nan) / fs
    bad = (dbp < 20) | (sbp > 300) | (mp < 30) | (mp > 200) | (pp < 20)
    hr = 60 / ibi
    bad |= (hr < 20) | (hr > 200)
    bad[1:] |= (np.abs(np.diff(sbp)) > 20) | (np.abs(np.diff(dbp)) > 20) | (np.abs(np.diff(y[onsets])) > 20)
    bad[1:] |= np.abs(np.diff(ibi)) > 0.5
    dd = np.diff(filled, prepend=filled[0])
    neg = np.minimum(dd, 0)
    s = np.add.reduceat(neg, feet)
    cnt = np.add.reduceat((dd < 0).astype(np.float64), feet)
    bad |= (s / np.maximum(cnt, 1)) * (fs / 125) < -3
    # Template correlation against the mean beat.
    length = max(4, int(round(0.6 * np.nanmedian(ibi) * fs)))
    ok = feet + length <= len(y)
    seg = y[feet[ok, None] + np.arange(length)]
    tmpl = seg[~bad[ok]].mean(axis=0) if (~bad[ok]).sum() >= 5 else seg.mean(axis=0)
    sc = seg - seg.mean(axis=1, keepdims=True)
    tc = tmpl - tmpl.mean()
    r = (sc @ tc) / np.sqrt((sc * sc).sum(axis=1) * (tc * tc).sum())
    bad[np.flatnonzero(ok)[r < 0.86]] = True
    # Intervals against the median of ±5 neighbours.
    med = ndimage.median_filter(np.nan_to_num(ibi, nan=np.nanmedian(ibi)), size=11, mode="nearest")
    bad |= np.abs(ibi - med) > 0.2 * med
    bad[0] = True
    # Notch: a local maximum of the falling slope between peak and the next foot.
    d1 = np.diff(y, prepend=y[0])
    cand = np.flatnonzero((d1[1:-1] > d1[:-2]) & (d1[1:-1] >= d1[2:]) & (d1[:-2] < 0)) + 1
    lo = np.searchsorted(cand, peaks + 3)
    hi = np.searchsorted(cand, np.append(feet[1:], len(y)) - 2)
    notch = (hi - lo) > 0
    return sbp, pp, bad, notch


def breaths(p, fs):
    lo, hi = np.percentile(p[:: max(1, len(p) // 1024)], [10, 90])
    rng = hi - lo
    if rng < 2:
        return np.array([], int)
    below = p < lo + 0.3 * rng
    above = p >= lo + 0.5 * rng
    onsets = []
    armed = False
    idx_b = np.flatnonzero(np.diff(below.astype(np.int8)) == 1) + 1
    idx_a = np.flatnonzero(np.diff(above.astype(np.int8)) == 1) + 1
    events = sorted([(i, 0) for i in idx_b] + [(i, 1) for i in idx_a])
    armed = bool(below[0])
    leave = lo + 0.15 * rng
    for i, kind in events:
        if kind == 0:
            armed = True
        elif armed:
            stop = max(0, i - int(1.5 * fs))
            under = np.flatnonzero(p[stop:i] <= leave)
            onsets.append(stop + under[-1] + 1 if len(under) else stop)
            armed = False
    return np.array(onsets, int)


def analyse(abp, paw, fs):
    af, ay, _, _ = condition(abp, fs, 16, True)
    _, py, _, _ = condition(paw, fs, 4, False)
    feet, peaks, onsets = zong(ay, fs)
    if len(feet) < 5:
        return 0, None
    sbp, pp, bad, _ = qualify(af, ay, fs, feet, peaks, onsets)
    on = breaths(py, fs)
    ppvs = []
    for a, b in zip(on[:-1], on[1:]):
        k0, k1 = np.searchsorted(peaks, [a, b])
        if k1 - k0 >= 4 and not bad[k0:k1].any():
            seg = pp[k0:k1]
            ppvs.append(100 * (seg.max() - seg.min()) / ((seg.max() + seg.min()) / 2))
    return max(0, len(on) - 1), (float(np.mean(ppvs[-3:])) if ppvs else None)


def main():
    d, fs, win, reps = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
    abp = np.fromfile(os.path.join(d, "abp.f64"), dtype="<f8")
    paw = np.fromfile(os.path.join(d, "paw.f64"), dtype="<f8")
    per = int(win * fs)

    def windows():
        c = 0
        for s in range(0, len(abp) - per + 1, per):
            c += analyse(abp[s : s + per], paw[s : s + per], fs)[0]
        return c

    def hour():
        return analyse(abp, paw, fs)[0]

    def best(fn):
        # CPU time of this process (one core), as the TypeScript side measures; wall time beside it.
        fn()
        t_best, w_best, out = float("inf"), float("inf"), 0
        for _ in range(reps):
            c0, t0 = time.process_time(), time.perf_counter()
            out = fn()
            t_best = min(t_best, time.process_time() - c0)
            w_best = min(w_best, time.perf_counter() - t0)
        return t_best, w_best, out

    tw, ww, cw = best(windows)
    th, wh, ch = best(hour)
    print(json.dumps({"windowsSeconds": tw, "hourSeconds": th, "windowsWall": ww, "hourWall": wh, "cyclesWindows": cw, "cyclesHour": ch, "numpy": np.__version__, "scipy": scipy.__version__}))


if __name__ == "__main__":
    main()
