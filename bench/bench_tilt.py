"""Benchmark: the check with the drive off vertical (issue 15), CPU seconds, with a peer.

Prints figures and ratios, never pass/fail. The peer is the same held orbit (state
and multipliers) by scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp
(DOP853, 1e-13) with the variational monodromy, as in tests/test_tilt.py.
Run: PYTHONPATH=pycore python bench/bench_tilt.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

import refsolvers as ref  # noqa: E402
import shakestill as ss  # noqa: E402
from shakestill.motion.orbit import held_orbit  # noqa: E402
from test_tilt import THREE, reference_orbit, tilted  # noqa: E402

RIGS = {
    "1 link crank, tilt 1 deg": tilted(ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                                               ref.crank(0.024, 0.08, 2700.0),
                                               {"speed_rpm": [300, 3600], "stroke_m": [0, 0.036]}),
                                       1.0),
    "3 links sine, tilt 1 deg": tilted(ref.rig(THREE, ref.sine(0.006, 2700.0),
                                               {"speed_rpm": [300, 3600], "stroke_m": [0, 0.01]}),
                                       1.0),
}


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


if __name__ == "__main__":
    main()
