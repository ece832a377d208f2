#!/usr/bin/python3
"""Reference response of a second-order catheter-transducer (Gardner, Anesthesiology 1981) to a
fast-flush square wave, from SciPy (Debian python3-scipy): scipy.signal.lsim of
H(s) = wn^2 / (s^2 + 2 zeta wn s + wn^2), input linearly interpolated between samples.

Run:  /usr/bin/python3 tests/reference/scipy/catheter.py
Writes tests/reference/fixtures/scipy-catheter.json. The TypeScript tests compare the synthetic
generator's catheter model with it, and measure the flush test on SciPy's own signal.
"""
import json
import os

import numpy as np
import scipy
from scipy import signal

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "fixtures", "scipy-catheter.json")

FS = 500.0
CASES = [(6.0, 0.15), (12.0, 0.1), (18.0, 0.35), (25.0, 0.05), (10.0, 0.6), (6.0, 1.3)]


def square_wave():
    n = int(3 * FS)
    u = np.full(n, 80.0)
    u[int(0.5 * FS) : int(2.0 * FS)] = 300.0
    return u


def main():
    u = square_wave()
    t = np.arange(len(u)) / FS
    cases = []
    for fn, zeta in CASES:
        wn = 2 * np.pi * fn
        sys_ = signal.lti([wn * wn], [1.0, 2 * zeta * wn, wn * wn])
        # Linear system with unit DC gain: simulate the deviation from the 80 mmHg rest from zero state.
        _, y, _ = signal.lsim(sys_, u - 80.0, t, interp=True)
        cases.append({"fn": fn, "zeta": zeta, "y": [round(float(v) + 80.0, 6) for v in y]})
    with open(OUT, "w") as f:
        json.dump({"scipy": scipy.__version__, "numpy": np.__version__, "fs": FS, "input": [float(v) for v in u], "cases": cases}, f)
        f.write("\n")


if __name__ == "__main__":
    main()
