"""Window edges against the Mathieu transition curves, including tongues narrower than the scan."""

import math

import pytest
from scipy.special import mathieu_a, mathieu_b

import shakestill as ss

G = 9.80665
L = 0.3
L_EQ = 2 * L / 3  # uniform rod pivoted at one end: l_eq = 2L/3 (handbook)


def speed_rpm_for(a):
    # Hanging single link, sine drive: a = 4 g / (l_eq omega^2) (Mathieu form, z = omega t / 2).
    return math.sqrt(4 * G / (L_EQ * a)) * 60 / (2 * math.pi)


def rod_rig(q, speed_rpm, damping=0.0):
    return ss.rig_from_dict({
        "format": "shakestill-rig", "version": 1,
        "links": [{"length_m": L, "rod_mass_kg": 0.1, "joint_damping_N_m_s": damping}],
        "drive": {"waveform": "sine", "stroke_m": q * L_EQ, "speed_rpm": speed_rpm},
        "limits": {"speed_rpm": [10, 3000], "stroke_m": [0, 0.2]}})


@pytest.mark.parametrize("n", [3, 4, 5])
def test_hanging_speed_window_between_tongues(n):
    # Operating point between tongue n-1 and tongue n. Tongue widths in a at q = 0.3 are
    # 8e-4, 7e-6 and 3e-8 for n = 3, 4, 5: far narrower than the scan spacing, so this
    # fails unless the peak search finds them. Reference: scipy.special.mathieu_b(n, q)
    # (lower speed edge) and mathieu_a(n-1, q) (upper speed edge); tolerance 1e-6 relative.
    q = 0.3
    w = ss.window(rod_rig(q, speed_rpm_for((n - 0.5) ** 2)), "hanging", "speed")
    assert w.low_is_edge and w.high_is_edge
    assert w.low == pytest.approx(speed_rpm_for(mathieu_b(n, q)), rel=1e-6)
    assert w.high == pytest.approx(speed_rpm_for(mathieu_a(n - 1, q)), rel=1e-6)


def _damped_max_multiplier(rig, speed_rpm):
    """Reference: monodromy of J q'' + c q' - (g + y'') s q = 0 (hanging: + sign on K) by
    scipy.integrate.solve_ivp (DOP853, rtol 1e-12) and numpy.linalg.eigvals."""
    import numpy as np
    from scipy.integrate import solve_ivp
    link = rig.links[0]
    J = link.rod_mass_kg * L ** 2 / 3
    s = link.rod_mass_kg * L / 2
    c = link.joint_damping_N_m_s
    w = 2 * math.pi * speed_rpm / 60
    A = rig.drive.stroke_m / 2

    def rhs(t, y):
        G = 9.80665 - A * w * w * math.cos(w * t)
        return [y[1], -(c * y[1] + G * s * y[0]) / J, y[3], -(c * y[3] + G * s * y[2]) / J]

    sol = solve_ivp(rhs, (0, 2 * math.pi / w), [1, 0, 0, 1], method="DOP853", rtol=1e-12,
                    atol=1e-12)
    mono = np.array([[sol.y[0, -1], sol.y[2, -1]], [sol.y[1, -1], sol.y[3, -1]]])
    return max(abs(np.linalg.eigvals(mono)))


def test_damping_closes_narrow_tongues_but_not_wide_ones():
    # Between tongues 4 and 5 at q = 0.3 with light damping (gamma T ~ 2e-3 near tongue 2):
    # tongues 3, 4, 5 and higher grow by less than the damping removes per cycle, tongue 2
    # by more (its undamped excess is ~1e-2). So the window must run down to the speed limit
    # and up into tongue 2, where its edge must agree with brentq on a solve_ivp reference
    # (scipy.optimize.brentq on max|multiplier| - 1) to 1e-6 relative.
    from scipy.optimize import brentq
    q = 0.3
    rig = rod_rig(q, speed_rpm_for(4.5 ** 2), damping=1e-5)
    w = ss.window(rig, "hanging", "speed")
    assert w.low == pytest.approx(10.0, rel=1e-12) and not w.low_is_edge
    lo, hi = speed_rpm_for(mathieu_a(2, q)), speed_rpm_for(mathieu_b(2, q))
    assert w.high_is_edge and lo < w.high < hi
    ref = brentq(lambda v: _damped_max_multiplier(rig, v) - 1, lo, 0.5 * (lo + hi), xtol=1e-9)
    assert w.high == pytest.approx(ref, rel=1e-6)


def test_window_null_when_unstable_and_outside_limits():
    # Inverted at a speed far below Kapitza's limit is unstable: windows are null.
    rig = rod_rig(0.1, 100.0)
    assert not ss.stability(rig, "inverted").stable
    result = ss.check(rig)
    assert result["inverted"]["speed_window_rpm"] is None
    assert result["inverted"]["stroke_window_m"] is None
    outside = ss.with_operating_point(rod_rig(0.3, 600.0), speed_rpm=5000.0)
    assert ss.window(outside, "hanging", "speed").interval is None
