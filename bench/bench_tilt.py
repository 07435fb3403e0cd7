"""Benchmark: the check with the drive off vertical (issue 15), CPU seconds, with a peer.

Prints figures and ratios, never pass/fail. The peer is the same held orbit (state
and multipliers) by scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp
(DOP853, 1e-13) with the variational monodromy, as in tests/test_tilt.py. The lean
chart over 60 tilts (inverted and hanging, plus its speed curve) is timed beside the
same peer walking the 60 tilts of the inverted curve alone (each fsolve started from the
last orbit, no monodromy: the cheapest fair peer).
The Pyodide pass (under Node.js, ``bench/pyodide_node.py``) times the same one-link check and
lean chart and prints the ratio to CPython's figure of this run; ``--no-pyodide`` skips it.
``--before PATH`` also times the same figures of another copy of the core (PATH: its
``pycore``, e.g. main's worktree) beside this one, alternating, in fresh processes, two rounds,
the smaller CPU time of each kept: before/after figures from one run.
Run: PYTHONPATH=pycore python bench/bench_tilt.py [--no-pyodide] [--before PATH]
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

import refsolvers as ref  # noqa: E402
import shakestill as ss  # noqa: E402
from scipy.integrate import solve_ivp  # noqa: E402
from scipy.optimize import fsolve  # noqa: E402
from shakestill.motion.lean_chart import lean_chart  # noqa: E402
from shakestill.motion.orbit import held_orbit  # noqa: E402
from test_tilt import THREE, planar_reference, reference_orbit, tilted  # noqa: E402

sys.path.insert(0, str(HERE))
from pyodide_node import run_in_pyodide  # noqa: E402

PYODIDE_CODE = """
import json, time
import shakestill as ss
from shakestill.motion.lean_chart import lean_chart
data, cpython = json.loads(DATA_JSON)
rig = ss.rig_from_dict(data)
for name, fn in (("tilted check", lambda: ss.check(rig)),
                 ("lean chart", lambda: lean_chart(rig, tilts=61))):
    t = time.perf_counter()
    fn()
    dt = time.perf_counter() - t
    print(f"Pyodide {name}, 1 link crank, tilt 1 deg: {dt:.2f} s "
          f"({dt / cpython[name]:.1f}x CPython's {cpython[name]:.2f} s, wall)")
"""

CHART_TILTS = 61  # 60 steps of tilt, 0 included

RIGS = {
    "1 link crank, tilt 1 deg": tilted(ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                                               ref.crank(0.024, 0.08, 2700.0),
                                               {"speed_rpm": [300, 3600], "stroke_m": [0, 0.036]}),
                                       1.0),
    "3 links sine, tilt 1 deg": tilted(ref.rig(THREE, ref.sine(0.006, 2700.0),
                                               {"speed_rpm": [300, 3600], "stroke_m": [0, 0.01]}),
                                       1.0),
}


FIGURES_CODE = """
import json, sys, time
import shakestill as ss
from shakestill.motion.lean_chart import lean_chart
rigs = json.loads(sys.argv[1])
out = {}
for name, data in rigs.items():
    rig = ss.rig_from_dict(data)
    t = time.process_time()
    ss.check(rig)
    out["check, " + name] = time.process_time() - t
rig = ss.rig_from_dict(rigs["1 link crank, tilt 1 deg"])
t = time.process_time()
lean_chart(rig, tilts=61)
out["lean chart, 1 link crank, 61 tilts + 42 speeds"] = time.process_time() - t
print(json.dumps(out))
"""


def figures(pycore: str) -> dict:
    """The check and lean chart CPU seconds of the core at ``pycore``, in a fresh process."""
    env = dict(os.environ, PYTHONPATH=pycore)
    run = subprocess.run([sys.executable, "-c", FIGURES_CODE, json.dumps(RIGS)], env=env,
                         capture_output=True, text=True, check=True)
    return json.loads(run.stdout)


def before_after(before: str) -> None:
    here = str(HERE.parent / "pycore")
    best: dict = {}
    for _ in range(2):  # alternating rounds: a load spike hits both sides alike
        for side, path in (("before", before), ("after", here)):
            for key, value in figures(path).items():
                best.setdefault(key, {}).setdefault(side, []).append(value)
    print(f"{'figure':48s} {'before':>8s} {'after':>8s}  ratio  (min of 2 rounds, CPU s)")
    for key, sides in best.items():
        b, a = min(sides["before"]), min(sides["after"])
        print(f"{key:48s} {b:8.2f} {a:8.2f}  {b / a:4.1f}x")


def cpu(fn):
    t = time.process_time()
    out = fn()
    return time.process_time() - t, out


def main() -> None:
    for name, data in RIGS.items():
        rig = ss.rig_from_dict(data)
        t_check, result = cpu(lambda: ss.check(rig))
        eq = "inverted" if name.startswith("1") else "hanging"
        t_orbit, orbit = cpu(lambda: held_orbit(rig, eq))
        t_peer, _ = cpu(lambda: reference_orbit(data, np.array(orbit.start) + 1e-3))
        print(f"{name}: check {t_check:.2f} s (tilt tolerance "
              f"{result['tilt_tolerance_deg']}); one {eq} orbit {t_orbit:.3f} s, "
              f"scipy shooting of it {t_peer:.2f} s, ratio {t_peer / t_orbit:.1f}x")


def peer_lean_walk(data, top_deg: float, count: int) -> None:
    """scipy's walk of the inverted orbit over ``count`` tilts (the timed peer)."""
    start = np.zeros(2 * len(data["links"]))
    for k in range(count):
        rhs, period = planar_reference(tilted(data, top_deg * k / (count - 1)))

        def flow(x):
            return solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-10,
                             atol=1e-12).y[:, -1]
        start = fsolve(lambda x: flow(x) - x, start, xtol=1e-10)


def one_link() -> dict:
    return ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                   ref.crank(0.024, 0.08, 2700.0), {"speed_rpm": [300, 3600],
                                                    "stroke_m": [0, 0.036]})


def wall(fn) -> float:
    t = time.perf_counter()
    fn()
    return time.perf_counter() - t


def pyodide_bench() -> None:
    data = tilted(one_link(), 1.0)
    rig = ss.rig_from_dict(data)
    cpython = {"tilted check": wall(lambda: ss.check(rig)),
               "lean chart": wall(lambda: lean_chart(rig, tilts=CHART_TILTS))}
    run_in_pyodide(PYODIDE_CODE.replace("DATA_JSON", repr(json.dumps([data, cpython]))))


def chart_bench() -> None:
    data = one_link()
    rig = ss.rig_from_dict(tilted(data, 1.0))
    t_chart, chart = cpu(lambda: lean_chart(rig, tilts=CHART_TILTS))
    t_tilts, _ = cpu(lambda: lean_chart(rig, tilts=CHART_TILTS, speeds=3))
    t_peer, _ = cpu(lambda: peer_lean_walk(data, chart["tilt_deg"][-1], CHART_TILTS))
    print(f"lean chart, 1 link crank: {CHART_TILTS} tilts x 2 equilibria + "
          f"{len(chart['speed_rpm'])} speeds x 2: {t_chart:.2f} s; tilts only (3 speeds) "
          f"{t_tilts:.2f} s; scipy walking the inverted tilts alone {t_peer:.2f} s "
          f"(ratio {t_peer / t_tilts:.1f}x against the tilts-only chart, which does both "
          "equilibria)")


if __name__ == "__main__":
    if "--before" in sys.argv:
        before_after(sys.argv[sys.argv.index("--before") + 1])
    main()
    chart_bench()
    if "--no-pyodide" not in sys.argv:
        pyodide_bench()
