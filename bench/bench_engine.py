"""Benchmark of the engine: prints figures and ratios, never passes or fails.

  python bench/bench_engine.py [--repeat N] [--points N]

1. Wall time of one full ss.check (both equilibria, windows included) of a
   single-link rig (target < 0.2 s) and of a 2-link rig (target < 2 s).
2. Time per point of ss.stability for a single link against a straightforward
   scipy.integrate.solve_ivp monodromy at equal accuracy (target ratio >= 100x).
   "Equal accuracy": the error of each in max |rho| against solve_ivp DOP853 at
   scipy's tightest tolerance (rtol = atol = 2.3e-14) is measured, and solve_ivp
   is timed down a ladder of tolerances (1e-3 ... 1e-13) to the first that is at
   least as accurate as the engine (or the tightest, if none is).
"""
import argparse
import pathlib
import statistics
import sys
import time

HERE = pathlib.Path(__file__).resolve().parent
sys.path[:0] = [str(HERE.parent / "tests"), str(HERE.parent / "pycore")]

import numpy as np  # noqa: E402

import refsolvers as ref  # noqa: E402
import shakestill as ss  # noqa: E402

LIMITS = {"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]}
ONE_LINK = ref.rig([ref.link(0.30, 0.05, [(0.02, 0.30)], 0.0, 2e-4)],
                   ref.crank(0.02, 0.06, 2400.0), LIMITS, title="Bench: one link")
TWO_LINK = ref.rig([ref.link(0.20, 0.04, [(0.01, 0.20)], 0.0, 2e-4),
                    ref.link(0.10, 0.02, [(0.008, 0.10)], 1e-6, 1e-4)],
                   ref.crank(0.02, 0.06, 2400.0), LIMITS, title="Bench: two links")


# CPU time of this process: on a shared, loaded machine it is far steadier than
# wall time, and the engine and solve_ivp are both single-threaded here.
clock = time.process_time


def timed(fn, repeat):
    times, walls = [], []
    for _ in range(repeat):
        w0, t0 = time.perf_counter(), clock()
        fn()
        times.append(clock() - t0)
        walls.append(time.perf_counter() - w0)
    return statistics.median(times), min(times), statistics.median(walls)


def bench_check(repeat):
    print("== full check (both equilibria, speed and stroke windows), CPU seconds")
    for name, data, target in (("single link", ONE_LINK, 0.2), ("two links", TWO_LINK, 2.0)):
        rig = ss.rig_from_dict(data)
        ss.check(rig)  # warm caches / imports
        med, best, wall = timed(lambda: ss.check(rig), repeat)
        print(f"  {name:12s} CPU median {med:8.4f} s   best {best:8.4f} s   (wall {wall:8.4f} s)"
              f"   target < {target} s   ({med / target:5.2f} of target)")


def scipy_max_multiplier(data, eq, rpm, tol):
    return float(max(abs(ref.multipliers(ref.monodromy(data, eq, speed_rpm=rpm,
                                                       rtol=tol, atol=tol)))))


def bench_points(points, waveform):
    drive = ref.sine(0.02, 2400.0) if waveform == "sine" else ref.crank(0.02, 0.06, 2400.0)
    data = ref.rig(ONE_LINK["links"], drive, LIMITS)
    rig = ss.rig_from_dict(data)
    speeds = np.linspace(1500.0, 3600.0, points)
    eq = "inverted"
    # Truth: DOP853 at scipy's tightest tolerance (rtol is floored at 100 eps).
    truth = [scipy_max_multiplier(data, eq, s, 2.3e-14) for s in speeds]

    ss.stability(rig, eq, speed_rpm=float(speeds[0]))
    t0 = clock()
    got = [ss.stability(rig, eq, speed_rpm=float(s)).max_multiplier for s in speeds]
    t_engine = (clock() - t0) / points
    err_engine = max(abs(g - t) for g, t in zip(got, truth))
    print(f"== per-point stability, one link, {waveform}, {points} speeds, inverted (CPU time)")
    print(f"  engine ss.stability            {t_engine * 1e3:9.3f} ms/point"
          f"   error in max|rho| {err_engine:.2e}")

    matched = None
    for tol in [1e-3, 1e-6, 1e-9, 1e-10, 1e-11, 1e-12, 1e-13]:
        t0 = clock()
        vals = [scipy_max_multiplier(data, eq, s, tol) for s in speeds]
        t_scipy = (clock() - t0) / points
        err = max(abs(v - t) for v, t in zip(vals, truth))
        print(f"  solve_ivp DOP853 rtol=atol={tol:.0e} {t_scipy * 1e3:9.3f} ms/point"
              f"   error {err:.2e}   ratio {t_scipy / t_engine:8.1f}x")
        matched = (tol, t_scipy, err)
        if err <= err_engine:
            break
    tol, t_scipy, err = matched
    note = "" if err <= err_engine else f" (solve_ivp never reached {err_engine:.1e})"
    print(f"  ratio at equal accuracy (rtol {tol:.0e}){note}: {t_scipy / t_engine:.1f}x"
          f"   target >= 100x")


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--points", type=int, default=40)
    args = parser.parse_args()
    print(f"python {sys.version.split()[0]}, shakestill {ss.__version__}")
    bench_check(args.repeat)
    for waveform in ("sine", "crank"):
        bench_points(args.points, waveform)


if __name__ == "__main__":
    main()
