"""The held orbit's window ends and the tilt tolerance (motion/lean.py, found by aiming at the
end: motion/bracket.py) against scipy on both sides of each.

Reference: scipy.optimize.fsolve shooting over scipy.integrate.solve_ivp (DOP853, 1e-12 to
1e-13) of the planar chain of tests/test_tilt.py, the monodromy from its variational
equations. Each end is a bracket of 1e-4 relative (lean.EDGE_RTOL) or 1e-3 deg
(lean.TOLERANCE_TOL_DEG); the probes sit outside that.
"""

from __future__ import annotations

import json
import math
import warnings

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import fsolve

import refsolvers as ref
import shakestill as ss
from shakestill.motion.lean import check as tilt_check
from shakestill.motion.orbit import solve_orbit
from test_tilt import RIG_LIMITS, THREE, planar_reference, reference_orbit, tilted


def crank_link(tilt: float) -> dict:
    return tilted(ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)],
                          ref.crank(0.024, 0.08, 2700.0), RIG_LIMITS), tilt)


def moved(data, key, value):
    d = json.loads(json.dumps(data))
    d["drive"][key] = value
    return d


def miss_of(data):
    rhs, period = planar_reference(data)
    return lambda x: solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-12,
                               atol=1e-12).y[:, -1] - x


def test_the_stroke_window_ends_where_scipy_loses_the_inverted_orbit():
    # Tilted 1 deg, the inverted orbit's low stroke end is a fold. 0.1% above the check's end
    # scipy finds a stable orbit (residual < 1e-9, largest |multiplier| < 1); 0.1% below it
    # finds none from starts all over the leaning range (residual stays above 1e-6).
    data = crank_link(1.0)
    inv = tilt_check(ss.rig_from_dict(data))["inverted"]
    assert inv["window_ends"]["stroke_low"] == "edge"
    end = inv["stroke_window_m"][0]
    above = moved(data, "stroke_m", end * 1.001)
    # scipy starts 1e-3 off the core's orbit there: the unstable twin lies close by
    near = solve_orbit(ss.rig_from_dict(above), "inverted", start=[0.25, 0.0]).start
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # near a fold fsolve's last steps are slow
        x, rhos = reference_orbit(above, np.array(near) + 1e-3)
    assert np.abs(miss_of(above)(x)).max() < 1e-9 and np.abs(rhos).max() < 1.0
    miss = miss_of(moved(data, "stroke_m", end * 0.999))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # fsolve warns that it makes no progress: the point
        for q0 in (0.1, 0.2, 0.3, 0.4, 0.5, 0.7):
            assert np.abs(miss(fsolve(miss, [q0, 0.0], xtol=1e-12))).max() > 1e-6


def test_three_links_hanging_speed_end_is_where_scipys_multiplier_leaves_the_circle():
    # Tilted 1 deg, the three-link hanging orbit loses stability at its low speed end with
    # the orbit still there: 2e-4 above the check's end scipy's largest |multiplier| is
    # below 1, 2e-4 below it above 1 (the same orbit both sides, residual < 1e-9).
    data = tilted(ref.rig(THREE, ref.sine(0.006, 2700.0), RIG_LIMITS), 1.0)
    result = tilt_check(ss.rig_from_dict(data))
    hang = result["hanging"]
    assert hang["window_ends"]["speed_low"] == "edge"
    end = hang["speed_window_rpm"][0]
    start = np.array([math.pi] * 3 + [0.0] * 3)
    for factor, inside in ((1.0002, True), (0.9998, False)):
        d = moved(data, "speed_rpm", end * factor)
        x, rhos = reference_orbit(d, start)
        assert np.abs(miss_of(d)(x)).max() < 1e-9
        assert (np.abs(rhos).max() < 1.0) == inside, (factor, np.abs(rhos).max())


def mean_lean_deg(data, x) -> float:
    """The orbit's mean angle over one cycle from scipy's dense output (2000 samples)."""
    rhs, period = planar_reference(data)
    sol = solve_ivp(rhs, (0, period), x, method="DOP853", rtol=1e-12, atol=1e-12,
                    dense_output=True)
    return math.degrees(float(np.mean(sol.sol(np.linspace(0, period, 2000, endpoint=False))[0])))


def test_the_tilt_tolerance_is_where_scipys_lean_passes_the_limit():
    # Limited by the lean (5 deg): 0.005 deg of tilt below the tolerance scipy's orbit is
    # stable and leans under 5 deg, 0.005 deg above it over 5 deg.
    data = crank_link(1.0)
    result = tilt_check(ss.rig_from_dict(data))
    tol = result["tilt_tolerance_deg"]
    assert result["tilt_tolerance"]["limited_by"] == "lean"
    for offset, under in ((-0.005, True), (0.005, False)):
        d = tilted(data, tol + offset)
        x, rhos = reference_orbit(d, np.array([0.08, 0.0]))
        assert np.abs(rhos).max() < 1.0
        assert (mean_lean_deg(d, x) < 5.0) == under
