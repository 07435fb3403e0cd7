"""Benchmark of the motion work: prints figures and ratios, never passes or fails.

  python bench/bench_motion.py [--repeat N] [--size N] [--no-pyodide]

1. 10 s of rig time at a 50 Hz drive (3000 rpm), single link on a crank,
   knocked at t = 0: CPU time of ss motion.simulate at its default tolerance
   (target at most 0.3 s), without frames and with 60 frames/s plus one
   stroboscopic sample per cycle. Then the ratio to scipy.integrate.solve_ivp
   (DOP853, a plain-float right-hand side written here) at equal accuracy:
   the error of each at 10 s against solve_ivp at scipy's tightest tolerance
   (rtol = atol = 2.3e-14), and solve_ivp timed down a ladder of tolerances to
   the first at least as accurate as the engine.
2. A 41 x 41 basin map of the demo rig (cell-to-cell mapping): CPU time on
   CPython without and with the default 16-point validation, and wall time in
   Pyodide under Node.js (node_modules/pyodide, the core's source copied in),
   with its progress (target at most 20 s).
"""
import argparse
import json
import math
import pathlib
import statistics
import sys
import time

HERE = pathlib.Path(__file__).resolve().parent
TOP = HERE.parent
sys.path[:0] = [str(TOP / "pycore")]

from scipy.integrate import solve_ivp  # noqa: E402

from pyodide_node import run_in_pyodide  # noqa: E402

import shakestill as ss  # noqa: E402
from shakestill.motion import basin as bs  # noqa: E402
import shakestill as mo  # noqa: E402

clock = time.process_time  # CPU time: steadier than wall time on a shared machine
RIG = {"format": "shakestill-rig", "version": 1, "title": "Bench: one link at 50 Hz",
       "links": [{"length_m": 0.30, "rod_mass_kg": 0.05,
                  "point_masses": [{"mass_kg": 0.02, "at_m": 0.30}],
                  "joint_damping_N_m_s": 2e-4}],
       "drive": {"waveform": "crank", "stroke_m": 0.02, "rod_length_m": 0.06,
                 "speed_rpm": 3000.0}}
KNOCK = 2.0  # rad/s at t = 0: a swing of some 20 degrees that recovers
DURATION = 10.0


def timed(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = clock()
        out = fn()
        times.append(clock() - t0)
    return statistics.median(times), out


def scipy_rhs():
    lk = RIG["links"][0]
    L, rod = lk["length_m"], lk["rod_mass_kg"]
    m, at = lk["point_masses"][0]["mass_kg"], lk["point_masses"][0]["at_m"]
    s, J, c = rod * L / 2 + m * at, rod * L * L / 3 + m * at * at, lk["joint_damping_N_m_s"]
    r, rl = RIG["drive"]["stroke_m"] / 2, RIG["drive"]["rod_length_m"]
    w = 2 * math.pi * RIG["drive"]["speed_rpm"] / 60
    g = 9.80665
    sin, cos, sqrt = math.sin, math.cos, math.sqrt

    def rhs(t, y):
        ph = w * t
        sp, cp = sin(ph), cos(ph)
        u = sqrt(rl * rl - r * r * sp * sp)
        d2 = -r * cp - r * r * (cp * cp - sp * sp) / u - r ** 4 * sp * sp * cp * cp / u ** 3
        return [y[1], ((g + d2 * w * w) * s * sin(y[0]) - c * y[1]) / J]
    return rhs


def bench_simulate(repeat):
    print("== 10 s of rig time, 50 Hz crank drive, single link, knocked (CPU seconds)")
    rig = ss.rig_from_dict(RIG)
    bare = mo.Scenario(duration_s=DURATION, rates_rad_s=(KNOCK,), frame_rate_hz=0.0,
                       strobe_phase_rad=None)
    full = mo.Scenario(duration_s=DURATION, rates_rad_s=(KNOCK,))
    mo.simulate(rig, bare)  # warm up (the unrolled stepper is built once)
    t_bare, motion = timed(lambda: mo.simulate(rig, bare), repeat)
    t_full, with_frames = timed(lambda: mo.simulate(rig, full), repeat)
    print(f"  engine, no frames      {t_bare:7.3f} s   target <= 0.3 s  ({t_bare / 0.3:4.2f} of "
          f"target)   {motion.work['steps']} steps, {motion.work['rejected']} rejected")
    print(f"  engine, 60 fps + strobe {t_full:6.3f} s   {len(with_frames.t_s)} frames, "
          f"{len(with_frames.strobe_t_s)} stroboscopic samples")
    rhs = scipy_rhs()
    truth = solve_ivp(rhs, (0, DURATION), [0.0, KNOCK], method="DOP853", rtol=2.3e-14,
                      atol=2.3e-14).y[:, -1]
    err_engine = max(abs(a - b) for a, b in zip(motion.end_state, truth))
    print(f"  engine error at 10 s against solve_ivp at 2.3e-14: {err_engine:.2e}")
    chosen = None
    for tol in [10.0 ** -k for k in range(3, 14)]:
        sol = solve_ivp(rhs, (0, DURATION), [0.0, KNOCK], method="DOP853", rtol=tol, atol=tol)
        err = max(abs(a - b) for a, b in zip(sol.y[:, -1], truth))
        if err <= err_engine or tol == 1e-13:
            chosen = tol, err
            break
    tol, err = chosen
    t_scipy, _ = timed(lambda: solve_ivp(rhs, (0, DURATION), [0.0, KNOCK], method="DOP853",
                                         rtol=tol, atol=tol), repeat)
    print(f"  solve_ivp DOP853 at rtol = atol = {tol:.0e} (error {err:.2e}): {t_scipy:7.3f} s")
    print(f"  ratio solve_ivp / engine at equal accuracy: {t_scipy / t_bare:5.2f}x")


def bench_map(size):
    print(f"== basin map {size} x {size}, demo rig (CPU seconds on CPython)")
    rig = ss.demo_rig()
    for validate in (0, bs.MAP_VALIDATE):
        t0 = clock()
        last = bs.basin_map(rig, size=size, validate=validate)
        dt = clock() - t0
        v = last.validation or {}
        words = f", {v.get('summary', '')}" if validate else ""
        print(f"  validate={validate:2d}: {dt:7.2f} s   target <= 20 s ({dt / 20:4.2f} of target)"
              f"   {last.work}{words}")


PYODIDE_MAP = """
import time
import shakestill as ss
from shakestill.motion import basin as bs
print(f"  Pyodide {sys.version.split()[0]} booted in {boot_s:.1f} s")
for validate in (0, bs.MAP_VALIDATE):
    t0 = time.perf_counter()
    shown = 0.0
    for fraction, last in bs.basin_steps(ss.demo_rig(), size=SIZE, validate=validate):
        if fraction >= shown:
            print(f"    progress {fraction * 100:5.1f}% at {time.perf_counter() - t0:6.2f} s")
            shown += 0.25
    dt = time.perf_counter() - t0
    print(f"  Pyodide validate={validate:2d}: {dt:7.2f} s wall   target <= 20 s ({dt / 20:4.2f} of target)")
"""


def bench_pyodide(size):
    print(f"== basin map {size} x {size} in Pyodide under Node.js (wall seconds)")
    run_in_pyodide(PYODIDE_MAP.replace("SIZE", str(size)))


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--repeat", type=int, default=3)
    p.add_argument("--size", type=int, default=41)
    p.add_argument("--no-pyodide", action="store_true")
    args = p.parse_args()
    bench_simulate(args.repeat)
    bench_map(args.size)
    if not args.no_pyodide:
        bench_pyodide(args.size)
    print(json.dumps({"note": "figures only; no pass/fail"}))


if __name__ == "__main__":
    main()
