#!/usr/bin/env python3
"""Side-by-side speed of Lamina and SciPy's DOP853 with events, measured on the same machine:

1. the Lorenz cut benchmark (REFERENCES.md, performance anchor): crossings per CPU-second of
   `lamina cut` and of solve_ivp with an event, and their ratio;
2. one regime-map cell (brusselator_map.ron): settle, span with cut events and the
   classification from the cut points, CPU time per cell of `lamina map` (over the whole 8 x 8
   map, process start included; Lamina also estimates each cell's largest Lyapunov exponent
   over the span, carrying one tangent vector in the same pass on the steps its states
   choose) against solve_ivp doing the settle, the span with the event and the same repeat
   test in Python on a spread-out subset of the cells, without and with the tangent vector
   over the span (Lamina's work per cell, the vector again left out of the error control),
   and their ratios. A second figure for Lamina leaves out what a run costs once, whatever
   its size (process start, reading the scenario, making the machine code: about 2.7 ms
   here, an eighth of the 8 x 8 map): the CPU time of the same plane as 16 x 16 cells less
   that of the 8 x 8 map, per extra cell.

Each side runs REPEATS times, the two taking turns, and its best rate counts, so that another
busy process on the machine disturbs the ratio less (and a busy spell slows both sides).

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
import tempfile
import time

import numpy as np
from scipy.integrate import solve_ivp

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
SCENARIO = os.path.join(HERE, "lorenz_cut.ron")
MAP_SCENARIO = os.path.join(HERE, "brusselator_map.ron")
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


MAP_A = np.linspace(0.5, 1.5, 8)
MAP_B = np.linspace(1.0, 4.0, 8)
MAP_SETTLE, MAP_SPAN, MAP_RTOL, MAP_ATOL = 200.0, 200.0, 1e-9, 1e-12
MAP_SUBSET = range(3, 64, 7)  # 9 cells spread over the map (every 7th from 3)


def scipy_cell(a, b):
    """One cell as SciPy would do it: settle, then the span with the cut x = a (rising) as an
    event, then the regime from the cut points: resting when the span's motion is within the
    repeat tolerance, else the least k <= 12 after which the later half of the points repeats,
    else no repeat."""

    def rates(_t, s):
        x, y = s
        return [a - (b + 1.0) * x + x * x * y, b * x - x * x * y]

    def cut(_t, s):
        return s[0] - a

    cut.direction = 1.0
    settle = solve_ivp(rates, (0.0, MAP_SETTLE), [1.3, 2.0], method="DOP853", rtol=MAP_RTOL, atol=MAP_ATOL)
    span = (MAP_SETTLE, MAP_SETTLE + MAP_SPAN)
    if WITH_EXPONENT:
        start = np.concatenate([settle.y[:, -1], np.array([1.0, 1.0]) / np.sqrt(2.0)])
        # the tangent's own errors do not choose the steps (an absolute tolerance far beyond
        # its size), as in Lamina, where the vector rides on the states' steps; SciPy's norm
        # still divides by four values where Lamina's divides by two, a little in SciPy's favour
        tangent_atol = np.array([MAP_ATOL, MAP_ATOL, 1e300, 1e300])
        sol = solve_ivp(with_tangent(a, b), span, start, method="DOP853", rtol=MAP_RTOL,
                        atol=tangent_atol, events=cut)
        exponent = np.log(np.hypot(sol.y[2, -1], sol.y[3, -1])) / MAP_SPAN
    else:
        sol = solve_ivp(rates, span, settle.y[:, -1], method="DOP853", rtol=MAP_RTOL,
                        atol=MAP_ATOL, events=cut)
        exponent = None
    states = sol.y[:2]
    size = np.sqrt(np.mean(np.max(np.abs(states), axis=1) ** 2))
    tolerance = 1e3 * (MAP_RTOL * size + MAP_ATOL)
    if np.max(np.ptp(states, axis=1)) <= tolerance:
        return "resting", exponent
    points = sol.y_events[0][:, :2]
    n = len(points)
    for k in range(1, 13):
        if n < k + 3:
            break
        later = points[n // 2:]
        if len(later) > k and np.max(np.linalg.norm(later[k:] - later[:-k], axis=1)) <= tolerance:
            return f"periodic {k}", exponent
    return "no repeat", exponent


def with_tangent(a, b):
    """The Brusselator with one tangent vector (x, y, u, v), integrated over the span in the
    same pass as the cut events, as Lamina does for every cell: the largest exponent is then
    ln |(u, v)(T)| / T. The Brusselator is not chaotic, so the vector needs no
    renormalisation over the span."""

    def rates(_t, s):
        x, y, u, v = s
        return [a - (b + 1.0) * x + x * x * y, b * x - x * x * y,
                (-(b + 1.0) + 2.0 * x * y) * u + x * x * v, (b - 2.0 * x * y) * u - x * x * v]

    return rates


WITH_EXPONENT = True


def scipy_cell_seconds(with_exponent):
    global WITH_EXPONENT
    WITH_EXPONENT = with_exponent
    t0 = time.process_time()
    for index in MAP_SUBSET:
        scipy_cell(MAP_A[index % 8], MAP_B[index // 8])
    return (time.process_time() - t0) / len(MAP_SUBSET)


def lamina_map_seconds(scenario):
    """CPU seconds of one `lamina map` run of `scenario` and its number of cells."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    out = subprocess.run([LAMINA, "map", scenario], check=True, capture_output=True, text=True).stdout
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return cpu, max(len(out.splitlines()) - 1, 1)


def finer_map_scenario(directory):
    """The benchmark map with 16 x 16 cells over the same plane, written into `directory`."""
    with open(MAP_SCENARIO) as f:
        text = f.read()
    finer = text.replace("values: 8", "values: 16")
    if finer.count("values: 16") != 2:
        sys.exit(f"expected two 'values: 8' in {MAP_SCENARIO}")
    path = os.path.join(directory, "brusselator_map_16.ron")
    with open(path, "w") as f:
        f.write(finer)
    return path


def main():
    if not os.path.exists(LAMINA):
        sys.exit(f"build first: cargo build --release (looked for {LAMINA})")
    repeats = int(sys.argv[1]) if len(sys.argv) > 1 else 3
    # the two sides take turns, so that a busy spell of the machine slows both alike
    lamina_runs, scipy_runs = [], []
    for _ in range(repeats):
        lamina_runs.append(lamina_rate())
        scipy_runs.append(scipy_rate())
    n_l, cpu_l = min(lamina_runs, key=lambda r: r[1] / r[0])
    n_s, cpu_s, evals = min(scipy_runs, key=lambda r: r[1] / r[0])
    rate_l, rate_s = n_l / cpu_l, n_s / cpu_s
    print(f"best of {repeats} runs each")
    print(f"lamina cut:    {n_l} crossings in {cpu_l:.3f} CPU-s: {rate_l:.0f} per CPU-second (process start and CSV output included)")
    print(f"scipy DOP853:  {n_s} crossings in {cpu_s:.3f} CPU-s: {rate_s:.0f} per CPU-second, {evals:.0f} evaluations per crossing")
    print(f"lamina/scipy: {rate_l / rate_s:.0f}")
    coarse_runs, fine_runs, cells_s, cells_e = [], [], [], []
    with tempfile.TemporaryDirectory() as directory:
        finer = finer_map_scenario(directory)
        for _ in range(repeats):
            coarse_runs.append(lamina_map_seconds(MAP_SCENARIO))
            fine_runs.append(lamina_map_seconds(finer))
            cells_s.append(scipy_cell_seconds(False))
            cells_e.append(scipy_cell_seconds(True))
    (coarse, n_coarse), (fine, n_fine) = min(coarse_runs), min(fine_runs)
    cell_l = coarse / n_coarse
    cell_extra = (fine - coarse) / (n_fine - n_coarse)
    cell_s, cell_e = min(cells_s), min(cells_e)
    print(f"lamina map:    {cell_l * 1e3:.3f} CPU-ms per cell ({n_coarse} cells, process start included, largest exponent included)")
    print(f"               {cell_extra * 1e3:.3f} CPU-ms per cell beyond the run's fixed cost ({n_fine} cells less {n_coarse} over the same plane: {fine * 1e3:.1f} - {coarse * 1e3:.1f} CPU-ms)")
    print(f"scipy DOP853:  {cell_s * 1e3:.1f} CPU-ms per cell ({len(MAP_SUBSET)} cells, settle + span with events + repeat test)")
    print(f"               {cell_e * 1e3:.1f} CPU-ms per cell with the tangent vector riding over the span for the largest exponent, as Lamina does")
    print(f"per cell, scipy/lamina: {cell_s / cell_l:.0f} (SciPy without the exponent), {cell_e / cell_l:.0f} (both with it), process start included")
    print(f"                        {cell_s / cell_extra:.0f} (SciPy without the exponent), {cell_e / cell_extra:.0f} (both with it), beyond the fixed cost")


if __name__ == "__main__":
    main()
