"""Benchmark of the stability chart: prints figures and ratios, never passes or fails.

  python bench/bench_chart.py [--rows 120] [--no-pyodide]

For each case: the CPU time of a chart over the rig's limits at the detail of a
200 x 120 grid (rows of 120 strokes; edges are roots in speed, finer than 200 columns),
and the time a straightforward per-cell chart would take with scipy.integrate.solve_ivp
monodromies (DOP853, rtol 1e-10, the accuracy needed for edges to ~1e-4 when refined from
cells): the per-cell time is measured on 40 cells and multiplied by 200 x 120 x 2
equilibria; and a numpy-vectorised fixed-step RK4 monodromy of every cell of the grid at
once. Then the same charts in Pyodide under Node.js (wall time) and the ratio to CPython.
Targets: one link with damping, sine <= 0.2 s and crank <= 1 s on CPython; two and three
links <= 1.5 s; at most 3x those in Pyodide; ratio to the per-cell chart >= 100x and
faster than the vectorised grid.
"""
import argparse
import json
import math
import pathlib
import sys
import time

HERE = pathlib.Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "pycore"))

import numpy as np  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402

from pyodide_node import run_in_pyodide  # noqa: E402

import shakestill as ss  # noqa: E402
from shakestill.equilibria.chart import chart  # noqa: E402

CELLS = 200 * 120 * 2
GRID_STEPS = 96  # RK4 steps per cycle of the vectorised peer (edges to ~1e-4 on these rigs)
clock = time.process_time  # CPU time: steadier than wall time on a shared machine
TWO_LINKS = [{"length_m": 0.15, "rod_mass_kg": 0.03, "joint_damping_N_m_s": 2e-4},
             {"length_m": 0.12, "rod_mass_kg": 0.02,
              "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}], "joint_damping_N_m_s": 1e-4}]


def rig_dict(waveform, links=None):
    d = ss.demo_rig_dict()
    d["drive"]["waveform"] = waveform
    if links:
        d["links"] = links
        d["drive"]["stroke_m"] = 0.016
    return d


THREE_LINKS = TWO_LINKS + [{"length_m": 0.08, "rod_mass_kg": 0.01,
                            "point_masses": [{"mass_kg": 0.006, "at_m": 0.08}],
                            "joint_damping_N_m_s": 1e-4}]
UNDAMPED_TWO = [dict(link, joint_damping_N_m_s=0.0) for link in TWO_LINKS]

CASES = (("one link, sine", rig_dict("sine"), 0.2), ("one link, crank", rig_dict("crank"), 1.0),
         ("two links, sine", rig_dict("sine", TWO_LINKS), 1.5),
         ("two links, crank", rig_dict("crank", TWO_LINKS), 1.5),
         ("2 undamped, crank", rig_dict("crank", UNDAMPED_TWO), 1.5),
         ("three links, sine", rig_dict("sine", THREE_LINKS), 1.5),
         ("three links, crank", rig_dict("crank", THREE_LINKS), 1.5))

PYODIDE_CHARTS = """
import json, time
import shakestill as ss
from shakestill.equilibria.chart import chart
print(f"  Pyodide {sys.version.split()[0]} booted in {boot_s:.1f} s")
for name, data, target, cpython_s in json.loads(CASES_JSON):
    t0 = time.perf_counter()
    c = chart(ss.rig_from_dict(data), rows=ROWS)
    took = time.perf_counter() - t0
    print(f"  {name:18s} Pyodide {took:7.2f} s ({c.evaluations} evaluations); "
          f"{took / cpython_s:4.2f}x CPython (target <= 3x); {took / (3 * target):4.2f} of 3x target")
"""


def solve_ivp_cell(r, eq, speed, stroke):
    lin = ss.linearise(r, eq)
    M, D, K = (np.array(x) for x in (lin.M, lin.D, lin.K))
    Minv, n = np.linalg.inv(M), len(M)
    w = 2 * math.pi * speed / 60
    drive = ss.with_operating_point(r, stroke_m=stroke).drive

    def rhs(t, y):
        Y = y.reshape(2 * n, 2 * n)
        acc = ss.pivot(drive, w * t, speed).a_m_s2
        return np.vstack([Y[n:], -Minv @ ((9.80665 + acc) * K @ Y[:n] + D @ Y[n:])]).ravel()

    sol = solve_ivp(rhs, (0, 2 * math.pi / w), np.eye(2 * n).ravel(), method="DOP853",
                    rtol=1e-10, atol=1e-12)
    return max(abs(np.linalg.eigvals(sol.y[:, -1].reshape(2 * n, 2 * n))))


def grid_monodromy_peer(r) -> float:
    """CPU seconds of a numpy-vectorised fixed-step (RK4, GRID_STEPS a cycle) monodromy of
    every cell of the 200 x 120 grid at once, both equilibria, and the largest multipliers."""
    lo, hi = r.limits.speed_rpm
    speeds = np.linspace(lo, hi, 200)
    strokes = np.linspace(r.limits.stroke_m[0], r.limits.stroke_m[1], 120)
    w = np.repeat(2 * math.pi * speeds / 60, len(strokes))
    s = np.tile(strokes, len(speeds))
    t0 = clock()
    for eq in ("inverted", "hanging"):
        lin = ss.linearise(r, eq)
        M, D, K = (np.array(x) for x in (lin.M, lin.D, lin.K))
        n = len(M)
        MK, MD = np.linalg.solve(M, K), np.linalg.solve(M, D)
        drives = [ss.with_operating_point(r, stroke_m=float(v)).drive for v in strokes]

        def field(phi):  # d/dphi of (q, q') for every cell: A(phi) / omega
            acc = np.tile([ss.pivot(d, phi, 60 / (2 * math.pi)).a_m_s2 for d in drives],
                          len(speeds))  # d2y/dphi2 at omega = 1
            A = np.zeros((len(w), 2 * n, 2 * n))
            A[:, :n, n:] = np.eye(n) / w[:, None, None]
            A[:, n:, :n] = -(9.80665 / w + w * acc)[:, None, None] * MK
            A[:, n:, n:] = -MD / w[:, None, None]
            return A

        Y = np.broadcast_to(np.eye(2 * n), (len(w), 2 * n, 2 * n)).copy()
        h = 2 * math.pi / GRID_STEPS
        for k in range(GRID_STEPS):
            a0, a1, a2 = field(k * h), field((k + 0.5) * h), field((k + 1) * h)
            k1 = a0 @ Y
            k2 = a1 @ (Y + 0.5 * h * k1)
            k3 = a1 @ (Y + 0.5 * h * k2)
            k4 = a2 @ (Y + h * k3)
            Y = Y + h / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
        np.abs(np.linalg.eigvals(Y)).max(axis=1)
    return clock() - t0


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--rows", type=int, default=120)
    p.add_argument("--no-pyodide", action="store_true")
    args = p.parse_args()
    print(f"== charts of {args.rows} rows on CPython (CPU seconds)")
    measured = []
    for name, data, target in CASES:
        r = ss.rig_from_dict(data)
        t0 = clock()
        c = chart(r, rows=args.rows)
        took = clock() - t0
        lo, hi = r.limits.speed_rpm
        t0 = clock()
        for k in range(20):
            for eq in ("inverted", "hanging"):
                solve_ivp_cell(r, eq, lo + (hi - lo) * (k + 0.5) / 20, r.drive.stroke_m)
        per_cell = (clock() - t0) / 40
        peer = per_cell * CELLS
        grid = grid_monodromy_peer(r)
        print(f"  {name:18s} chart {took:7.2f} s ({c.evaluations} evaluations, target <= {target} s, "
              f"{took / target:4.2f} of target); per-cell solve_ivp {per_cell * 1e3:6.2f} ms x "
              f"{CELLS} = {peer:8.0f} s; ratio {peer / took:7.0f}x (target >= 100x); "
              f"numpy grid RK4 {grid:6.2f} s, ratio {grid / took:5.2f}x (target > 1x)")
        measured.append([name, data, target, took])
    if not args.no_pyodide:
        print("== the same charts in Pyodide under Node.js (wall seconds)")
        run_in_pyodide(PYODIDE_CHARTS.replace("CASES_JSON", repr(json.dumps(measured)))
                       .replace("ROWS", str(args.rows)))
    print(json.dumps({"note": "figures only; no pass/fail"}))


if __name__ == "__main__":
    main()
