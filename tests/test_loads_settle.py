"""Loads after a settle longer than the last second (loads() then settles without frames
first and carries on from where that run got to), against Newton's laws worked
independently:

- the motion: scipy.integrate.solve_ivp (DOP853, rtol = atol = 1e-12) on the virtual-work
  equations of tests/test_motion.py from the knocked start, through the whole settle;
- a point mass m on a massless rod of length l below a pivot moving along the vertical by
  (s/2) cos(w t): its acceleration a_p y + l (cos q q'' - sin q q'^2, -sin q q'' - cos q q'^2)
  with u = (sin q, cos q) along the rod (hanging at q = pi); the pivot's force on it is
  m (a + g y) (Newton's second law; common practice, no source); the drive force its
  vertical part, the power that force times the pivot's velocity, the rod's axial load
  (compression positive) that force along u;
- the default settle: max(10 s, 20 slow periods), and this rig's inverted position has no
  slow sway (Kapitza's condition A^2 w^2 > 2 g l fails: Landau & Lifshitz, Mechanics, sec. 30),
  so 10 s.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

import refsolvers as ref
import shakestill as ss
from shakestill.motion.loads import loads
from test_motion import lagrange_rhs, scipy_states

G = ref.G_STANDARD
MASS, ARM, STROKE, RPM, DAMPING = 0.02, 0.2, 0.006, 600.0, 1e-4  # invented small bob
F = RPM / 60.0  # drive cycles per second
POINTS = 64


def bob_data():
    return ref.rig([ref.link(ARM, 0.0, [(MASS, ARM)], 0.0, DAMPING)], ref.sine(STROKE, RPM))


def newton(start, settle_cycles):
    """The drive force, power and axial load at each frame of the cycle after
    ``settle_cycles`` whole cycles, from solve_ivp's motion."""
    data = bob_data()
    times = (settle_cycles + np.arange(POINTS) / POINTS) / F
    states = scipy_states(data, start, np.concatenate(([0.0], times)))[1:]
    rhs = lagrange_rhs(data, None)
    w_drive = 2 * math.pi * F
    force, power, axial = [], [], []
    for t, (q, w) in zip(times, states):
        qdd = rhs(t, np.array([q, w]))[1]
        a_p = -STROKE / 2 * w_drive ** 2 * math.cos(w_drive * t)
        v_p = -STROKE / 2 * w_drive * math.sin(w_drive * t)
        a = np.array([ARM * (math.cos(q) * qdd - math.sin(q) * w * w),
                      a_p + ARM * (-math.sin(q) * qdd - math.cos(q) * w * w)])
        pull = MASS * (a + np.array([0.0, G]))
        force.append(pull[1])
        power.append(pull[1] * v_p)
        axial.append(pull @ np.array([math.sin(q), math.cos(q)]))
    return np.array(force), np.array(power), np.array(axial), states


def check_cycle(out, want_force, want_power, want_axial):
    got = out["samples"]
    scale = np.max(np.abs(want_force))
    assert np.max(np.abs(np.array(got["drive_force_N"]) - want_force)) < 1e-6 * scale
    assert np.max(np.abs(np.array(got["power_W"]) - want_power)) < 1e-6 * np.max(
        np.abs(want_power))
    assert np.max(np.abs(np.array(got["axial_N"][0]) - want_axial)) < 1e-6 * scale
    # the bob is pulled down harder than gravity for part of the cycle (A w^2 = 11.8 m/s^2):
    # the rod is in compression then, in tension otherwise, both well under 1 N
    link = out["links"][0]
    assert link["link"] == 1
    assert 0.0 < link["max_compression_N"] == pytest.approx(max(want_axial), abs=1e-6 * scale)
    assert link["max_tension_N"] == pytest.approx(-min(want_axial), abs=1e-6 * scale)
    assert link["max_tension_N"] < 1.0
    assert got["phase_rad"] == pytest.approx([2 * math.pi * k / POINTS for k in range(POINTS)],
                                             abs=1e-15)
    assert out["success"] is True and out["message"] == ""


def test_a_knock_settled_past_the_last_second_is_followed_through_the_whole_settle():
    # Hanging, knocked at 1 rad/s, settled 1.5 s: 15 whole cycles of the 10 Hz drive, the
    # first 5 without frames, then the last second and the cycle shown; each sample of that
    # cycle against Newton on solve_ivp's motion from the knock through all 1.5 s (1e-6 of the
    # largest value: both solvers run far tighter).
    out = loads(ss.rig_from_dict(bob_data()), equilibrium="hanging", knock_rad_s=1.0,
                settle_s=1.5, points_per_cycle=POINTS)
    force, power, axial, states = newton([math.pi, 1.0], 15)
    assert out["settle_s"] == 1.5 and out["state"] == "moving"
    assert np.max(np.abs(states[:, 0] - math.pi)) > 0.05  # still swinging: the check has teeth
    check_cycle(out, force, power, axial)


def test_a_given_start_angle_settles_ten_seconds_by_default():
    # Only a start angle given (0.3 rad off hanging, at rest): the run is disturbed, so the
    # default settle is max(10 s, 20 slow periods) = 10 s (no slow sway upright, see above):
    # 100 whole cycles, then the cycle shown against Newton on solve_ivp through all 10 s.
    out = loads(ss.rig_from_dict(bob_data()), equilibrium="hanging",
                angles_rad=(math.pi + 0.3,), points_per_cycle=POINTS)
    assert STROKE / 2 * (2 * math.pi * F) ** 2 > G  # the pivot pulls down harder than g
    assert (STROKE / 2 * 2 * math.pi * F) ** 2 < 2 * G * ARM  # Kapitza's condition fails
    force, power, axial, _ = newton([math.pi + 0.3, 0.0], 100)
    assert out["settle_s"] == pytest.approx(10.0, rel=1e-12) and out["state"] == "moving"
    check_cycle(out, force, power, axial)
    # one event, in the frameless run: the swing decays back inside the "recovered" band
    # (0.2 rad of hanging, the Scenario default; 1 s stay) when solve_ivp's swing last leaves
    # 0.2 rad (on a 0.25 ms grid: that close), and never reaches the "fell" band (pi/2)
    times = np.linspace(0.0, 10.1, 40401)
    swing = np.abs(scipy_states(bob_data(), [math.pi + 0.3, 0.0], times)[:, 0] - math.pi)
    last_out = times[np.nonzero(swing > 0.2)[0][-1]]
    assert swing.max() < math.pi / 2 and 1.0 < last_out < 9.0
    (event,) = out["events"]
    assert event["kind"] == "recovered" and abs(event["t_s"] - last_out) < 5e-4


def test_a_settle_within_the_last_second_runs_once_from_the_knock():
    # 1 s settle: 10 whole cycles, all of them the last second (no frameless run first); the
    # cycle after it against Newton on solve_ivp's motion from the knock, and the run's words
    # empty as the run succeeded.
    out = loads(ss.rig_from_dict(bob_data()), equilibrium="hanging", knock_rad_s=1.0,
                settle_s=1.0, points_per_cycle=POINTS)
    force, power, axial, _ = newton([math.pi, 1.0], 10)
    assert out["settle_s"] == 1.0
    check_cycle(out, force, power, axial)
