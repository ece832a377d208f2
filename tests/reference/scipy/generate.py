#!/usr/bin/python3
"""Reference vectors from SciPy (Debian python3-scipy) for the Ebbgate analysis engine tests.

Run:  /usr/bin/python3 tests/reference/scipy/generate.py
Writes tests/reference/fixtures/scipy-filters.json and scipy-peaks.json. The TypeScript tests
compare against these files and never need Python. Signals are made here, independently of the
engine's own synthetic generator, so the peak check is not the engine grading itself.
"""
import json
import os
import sys

import numpy as np
import scipy
from scipy import signal

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "fixtures")


def test_signal(n, fs):
    """Deterministic mix of tones, a step and a ramp: exercises edges and DC handling."""
    t = np.arange(n) / fs
    x = (
        80.0
        + 20.0 * np.sin(2 * np.pi * 1.2 * t)
        + 5.0 * np.sin(2 * np.pi * 7.3 * t + 0.4)
        + 3.0 * np.sin(2 * np.pi * 23.0 * t + 1.1)
        + 2.0 * np.sin(2 * np.pi * 0.2 * t)
        + np.where(t > t[-1] * 0.6, 10.0, 0.0)
        + 4.0 * t / t[-1]
    )
    return x


def filter_cases():
    cases = [
        (1, 5.0, "lowpass", 100.0),
        (2, 16.0, "lowpass", 125.0),
        (4, 16.0, "lowpass", 125.0),
        (3, 10.0, "lowpass", 250.0),
        (6, 40.0, "lowpass", 500.0),
        (2, 0.5, "highpass", 125.0),
        (2, [0.5, 8.0], "bandpass", 125.0),
        (3, [0.5, 8.0], "bandpass", 100.0),
        (4, [1.0, 10.0], "bandpass", 250.0),
    ]
    out = []
    for order, cutoff, btype, fs in cases:
        b, a = signal.butter(order, cutoff, btype=btype, fs=fs)
        sos = signal.butter(order, cutoff, btype=btype, fs=fs, output="sos")
        x = test_signal(int(fs * 6), fs)
        out.append(
            {
                "order": order,
                "cutoff": cutoff,
                "btype": btype,
                "fs": fs,
                "b": b.tolist(),
                "a": a.tolist(),
                "lfilterZi": signal.lfilter_zi(b, a).tolist(),
                "x": x.tolist(),
                "filtfilt": signal.filtfilt(b, a, x).tolist(),
                "sosfiltfilt": signal.sosfiltfilt(sos, x).tolist(),
            }
        )
    return out


def pulse(t, t0, height, rise, decay):
    """One pressure-like pulse: smooth rise then exponential decay, zero before t0."""
    u = t - t0
    y = np.zeros_like(t)
    m = u > 0
    y[m] = height * (1 - np.exp(-((u[m] / rise) ** 2))) * np.exp(-u[m] / decay)
    return y


def pulse_train(fs, seconds, seed, base, height, rise, decay, noise):
    rng = np.random.default_rng(seed)
    t = np.arange(int(fs * seconds)) / fs
    x = np.full_like(t, base)
    beat = 0.3
    onsets = []
    while beat < seconds - 0.3:
        onsets.append(beat)
        hr = 60 + 45 * (0.5 + 0.5 * np.sin(2 * np.pi * beat / 20.0))  # 60–105 /min
        resp = 1 + 0.1 * np.sin(2 * np.pi * beat / 5.0)  # respiratory modulation of height
        x += pulse(t, beat, height * resp, rise, decay)
        beat += 60.0 / hr * (1 + 0.03 * rng.standard_normal())
    x += noise * rng.standard_normal(t.size)
    return t, x, onsets


def peak_cases():
    cases = []
    for name, fs, seed, base, height, rise, decay, noise, prom in [
        ("abp-125", 125.0, 1, 60.0, 70.0, 0.06, 0.35, 0.3, 15.0),
        ("abp-250", 250.0, 2, 55.0, 80.0, 0.05, 0.30, 0.5, 15.0),
        ("pleth-100", 100.0, 3, 0.0, 1.0, 0.12, 0.30, 0.01, 0.25),
    ]:
        t, x, onsets = pulse_train(fs, 40.0, seed, base, height, rise, decay, noise)
        peaks, _ = signal.find_peaks(x, distance=int(0.3 * fs), prominence=prom)
        cases.append(
            {
                "name": name,
                "fs": fs,
                "x": np.round(x, 9).tolist(),
                "findPeaks": {"distance": int(0.3 * fs), "prominence": prom, "peaks": peaks.tolist()},
                "onsetTimes": onsets,
            }
        )
    return cases


def main():
    os.makedirs(OUT, exist_ok=True)
    meta = {"generator": "tests/reference/scipy/generate.py", "scipy": scipy.__version__, "numpy": np.__version__}
    with open(os.path.join(OUT, "scipy-filters.json"), "w") as f:
        json.dump({"meta": meta, "cases": filter_cases()}, f)
    with open(os.path.join(OUT, "scipy-peaks.json"), "w") as f:
        json.dump({"meta": meta, "cases": peak_cases()}, f)
    print("wrote fixtures with scipy", scipy.__version__, file=sys.stderr)


if __name__ == "__main__":
    main()
