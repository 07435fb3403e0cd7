"""Benchmark of the planner (``shakestill plan``): prints figures and ratios, never passes or fails.

  python bench/bench_plan.py [--no-pyodide]

Cases: one link with 6 uncertain numbers (sine drive, and the demo's crank), and two links
with 4. Each: CPU seconds of plan_steps plus the JSON's sensitivity table and run-up advice
(``plan`` + ``plan_dict``). Peer, measured in the same run: a straightforward planner that
evaluates the same grid (rows x SPEED_SAMPLES points for every rig of the set) by per-cell
scipy.integrate.solve_ivp monodromies (DOP853, rtol 1e-10): the per-cell time on 20 cells
times the cells. Targets: one link <= 2 s on CPython and <= 6 s in Pyodide; two links <= 10 s.
"""
import argparse
import json
import pathlib
import sys
import time

HERE = pathlib.Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "pycore"))

from bench_chart import TWO_LINKS, solve_ivp_cell  # noqa: E402
from pyodide_node import run_in_pyodide  # noqa: E402

import shakestill as ss  # noqa: E402
from shakestill.equilibria import plan as planner  # noqa: E402
from shakestill.equilibria.plan_report import plan_dict  # noqa: E402

clock = time.process_time
SIX = {"links[0].length_m": "+-2%", "links[0].joint_damping_N_m_s": "0.5x..2x",
       "drive.speed_rpm": "+-1%", "drive.stroke_m": "+-0.3 mm",
       "links[0].point_masses[0].at_m": "+-1 mm", "links[0].point_masses[0].mass_kg": "+-3%"}
FOUR = {"links[0].length_m": "+-2%", "links[1].joint_damping_N_m_s": "0.5x..2x",
        "drive.speed_rpm": "+-1%", "links[1].point_masses[0].mass_kg": "+-5%"}


def case(waveform, links=None, spreads=SIX):
    d = ss.demo_rig_dict()
    d["drive"]["waveform"] = waveform
    if waveform == "sine":
        d["drive"].pop("rod_length_m")
    if links:
        d["links"] = links
        d["drive"]["stroke_m"] = 0.016
    d["spreads"] = spreads
    return d


CASES = (("one link, sine, 6", case("sine"), 2.0), ("one link, crank, 6", case("crank"), 2.0),
         ("two links, crank, 4", case("crank", TWO_LINKS, FOUR), 10.0))

PYODIDE = """
import json, time
import shakestill as ss
from shakestill.equilibria.plan import plan
from shakestill.equilibria.plan_report import plan_dict
print(f"  Pyodide {sys.version.split()[0]} booted in {boot_s:.1f} s")
for name, data, target, cpython_s in json.loads(CASES_JSON):
    t0 = time.perf_counter()
    rig = ss.rig_from_dict(data)
    out = plan_dict(plan(rig), rig)
    took = time.perf_counter() - t0
    print(f"  {name:20s} Pyodide {took:7.2f} s; {took / cpython_s:4.2f}x CPython; "
          f"margin {out['worst_margin_percent']:.2f}%")
"""


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--no-pyodide", action="store_true")
    args = p.parse_args()
    print("== plans on CPython (CPU seconds)")
    measured = []
    for name, data, target in CASES:
        rig = ss.rig_from_dict(data)
        t0 = clock()
        res = planner.plan(rig)
        t1 = clock()
        out = plan_dict(res, rig)
        took = clock() - t0
        rows = len(next(iter(res.robust.values())))
        cells = rows * planner.SPEED_SAMPLES * len(res.rig_set.rigs)
        lo, hi = rig.limits.speed_rpm
        t2 = clock()
        for k in range(20):
            solve_ivp_cell(res.rig_set.rigs[0], "inverted", lo + (hi - lo) * (k + 0.5) / 20,
                           rig.drive.stroke_m)
        per_cell = (clock() - t2) / 20
        print(f"  {name:20s} plan {took:6.2f} s (search {t1 - t0:.2f} s, sensitivity and run-up "
              f"{took - (t1 - t0):.2f} s; {len(res.rig_set.rigs)} rigs; target <= {target} s, "
              f"{took / target:4.2f} of target); margin {out['worst_margin_percent']:.2f}% at "
              f"{out['speed_rpm']:.0f} rpm, {out['stroke_m'] * 1e3:.2f} mm; per-cell solve_ivp "
              f"{per_cell * 1e3:.2f} ms x {cells} cells = {per_cell * cells:.0f} s; "
              f"ratio {per_cell * cells / took:.0f}x")
        measured.append([name, data, target, took])
    if not args.no_pyodide:
        print("== the same plans in Pyodide under Node.js (wall seconds; target one link <= 6 s)")
        run_in_pyodide(PYODIDE.replace("CASES_JSON", repr(json.dumps(measured))))
    print(json.dumps({"note": "figures only; no pass/fail"}))


if __name__ == "__main__":
    main()
