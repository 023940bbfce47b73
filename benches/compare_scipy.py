#!/usr/bin/env python3
"""Side-by-side speed of `lamina cut` and SciPy's DOP853 with an event on the Lorenz cut
benchmark (REFERENCES.md, performance anchor): crossings per CPU-second of each, measured on the
same machine, and their ratio. Each side runs REPEATS times and its best rate counts, so that
another busy process on the machine disturbs the ratio less.

SciPy is needed only for this comparison, never for the tests:
    python3 -m venv /tmp/venv-scipy && /tmp/venv-scipy/bin/pip install scipy
    cargo build --release
    /tmp/venv-scipy/bin/python benches/compare_scipy.py [REPEATS]

The binary is target/release/lamina of this checkout, or under $CARGO_TARGET_DIR when that is
set (as for the cargo build), or the file named by $LAMINA_BIN.
"""

import os
import resource
import subprocess
import sys
import time

import numpy as np
from scipy.integrate import solve_ivp

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
SCENARIO = os.path.join(HERE, "lorenz_cut.ron")
TARGET = os.environ.get("CARGO_TARGET_DIR") or os.path.join(ROOT, "target")
LAMINA = os.environ.get("LAMINA_BIN") or os.path.join(TARGET, "release", "lamina")
SIGMA, RHO, BETA = 10.0, 28.0, 8.0 / 3.0
SCIPY_SPAN = 300.0  # SciPy is slow: a shorter span gives enough crossings for a rate


def lorenz(_t, s):
    x, y, z = s
    return [SIGMA * (y - x), x * (RHO - z) - y, x * y - BETA * z]


def cut(_t, s):
    return s[2] - 27.0


cut.direction = -1.0  # falling


def scipy_rate():
    settle = solve_ivp(lorenz, (0.0, 50.0), [1.0, 1.0, 1.0], method="DOP853", rtol=1e-9, atol=1e-9)
    start = settle.y[:, -1]
    t0 = time.process_time()
    sol = solve_ivp(lorenz, (50.0, 50.0 + SCIPY_SPAN), start, method="DOP853", rtol=1e-9, atol=1e-9, events=cut)
    cpu = time.process_time() - t0
    n = len(sol.t_events[0])
    return n, cpu, sol.nfev / max(n, 1)


def lamina_rate():
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    out = subprocess.run([LAMINA, "cut", SCENARIO], check=True, capture_output=True, text=True).stdout
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    n = max(len(out.splitlines()) - 1, 0)
    return n, cpu


def main():
    if not os.path.exists(LAMINA):
        sys.exit(f"build first: cargo build --release (looked for {LAMINA})")
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    n_l, cpu_l = min((lamina_rate() for _ in range(repeats)), key=lambda r: r[1] / r[0])
    n_s, cpu_s, evals = min((scipy_rate() for _ in range(repeats)), key=lambda r: r[1] / r[0])
    rate_l, rate_s = n_l / cpu_l, n_s / cpu_s
    print(f"best of {repeats} runs each")
    print(f"lamina cut:    {n_l} crossings in {cpu_l:.3f} CPU-s: {rate_l:.0f} per CPU-second (process start and CSV output included)")
    print(f"scipy DOP853:  {n_s} crossings in {cpu_s:.3f} CPU-s: {rate_s:.0f} per CPU-second, {evals:.0f} evaluations per crossing")
    print(f"lamina/scipy: {rate_l / rate_s:.0f}")


if __name__ == "__main__":
    main()
