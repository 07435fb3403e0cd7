"""Several links as first-class as one: sway modes, their frequencies and the estimates
that bind, against outside references (the source is named beside each check)."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.linalg

import refsolvers as ref
import shakestill as ss
from shakestill.model.modes import modes

G = ref.G_STANDARD


def _two_equal(length=0.2, mass=0.05, damping=0.0, drive=None):
    """Two equal point masses on massless links of equal length: the textbook double pendulum."""
    lk = ref.link(length, point_masses=[(mass, length)], damping=damping)
    return ref.rig([lk, dict(lk)], drive or ref.sine(0.0, 3000.0))


def _three(damping=0.0, drive=None):
    links = [ref.link(0.18, 0.03, [(0.02, 0.18)], damping=damping),
             ref.link(0.12, 0.02, [(0.012, 0.12)], damping=damping),
             ref.link(0.08, 0.01, [(0.006, 0.08)], damping=damping)]
    return ref.rig(links, drive or ref.sine(0.004, 24000.0))


def test_double_pendulum_modes_are_the_textbook_ones():
    # omega^2 = (g / l)(2 -+ sqrt 2) for equal masses and lengths (any classical mechanics
    # text, e.g. Goldstein, Classical Mechanics, ch. 6; value from memory). A mode of
    # omega^2 = g / L has equivalent length L, so L = l / (2 -+ sqrt 2). Tolerance 1e-12.
    l = 0.2
    got = modes(ss.rig_from_dict(_two_equal(l))).lengths_m
    assert got[0] == pytest.approx(l / (2 - math.sqrt(2)), rel=1e-12)
    assert got[1] == pytest.approx(l / (2 + math.sqrt(2)), rel=1e-12)
    hanging = ss.properties(ss.rig_from_dict(_two_equal(l))).hanging_frequencies_hz
    assert [(2 * math.pi * f) ** 2 for f in hanging] == pytest.approx(
        [G / l * (2 - math.sqrt(2)), G / l * (2 + math.sqrt(2))], rel=1e-10)


def test_mode_lengths_and_shapes_match_scipy_eigh():
    # scipy.linalg.eigh(K, M) on the reference chain matrices (tests/refsolvers.py builds
    # them from the chain's Lagrangian): lambda = 1 / L, X^T M X = I. Tolerance 1e-12.
    data = _three()
    mass, _, stiff = ref.chain_matrices(data, "hanging")
    lam, vecs = scipy.linalg.eigh(stiff, mass)
    got = modes(ss.rig_from_dict(data))
    assert got.lengths_m == pytest.approx(sorted(1.0 / lam, reverse=True), rel=1e-12)
    for k, shape in enumerate(got.shapes):  # longest first = smallest lambda first
        v = vecs[:, k] / vecs[np.argmax(abs(vecs[:, k])), k]
        assert shape == pytest.approx(list(v), rel=1e-9, abs=1e-12)


@pytest.mark.parametrize("equilibrium", ["inverted", "hanging"])
@pytest.mark.parametrize("make", [_two_equal, _three], ids=["two links", "three links"])
def test_sway_modes_are_the_multipliers_angles(make, equilibrium):
    # Undamped: every multiplier on the unit circle, nu_i = |arg rho_i| / 2 pi, one per
    # pair. Reference: scipy.integrate.solve_ivp monodromy (DOP853, rtol 1e-12) and
    # numpy.linalg.eigvals. Tolerance 1e-8 of the drive frequency.
    data = make(drive=ref.sine(0.004, 24000.0))
    s = ss.stability(ss.rig_from_dict(data), equilibrium)
    assert s.stable
    rhos = ref.multipliers(ref.monodromy(data, equilibrium))
    nus = sorted(abs(np.angle(r)) / (2 * math.pi) for r in rhos)[::2]
    f = 24000.0 / 60.0
    assert len(s.sway_modes_hz) == len(data["links"])
    assert list(s.sway_modes_hz) == pytest.approx([nu * f for nu in nus], abs=1e-8 * f)
    assert s.slow_frequency_hz == s.sway_modes_hz[0]


def test_slow_sway_of_an_undamped_rig_does_not_jump_between_modes():
    # The slowest mode is the slow sway, whichever multiplier is largest in round-off: two
    # speeds 1e-9 apart give the same frequency to 1e-6 (common practice, no source).
    rig = ss.rig_from_dict(_two_equal(drive=ref.sine(0.01, 6000.0)))
    a = ss.stability(rig, "inverted", speed_rpm=6000.0)
    b = ss.stability(rig, "inverted", speed_rpm=6000.0 * (1 + 1e-9))
    assert a.stable and b.stable
    assert b.slow_frequency_hz == pytest.approx(a.slow_frequency_hz, rel=1e-6)


def test_an_unstable_equilibrium_has_no_slow_frequency_and_says_so_once():
    # the shared convention (architecture.md): null when unstable
    data = _two_equal(drive=ref.sine(0.002, 600.0))
    result = ss.check(ss.rig_from_dict(data))
    inv = result["inverted"]
    assert inv["stable"] is False
    assert inv["slow_frequency_hz"] is None and inv["sway_modes_hz"] is None
    assert len(inv["messages"]) == len(set(inv["messages"]))


def _upper_stroke_edge(rig, speed_rpm):
    """The exact inverted upper stroke edge at one speed, by bisection on the verdict."""
    lo, hi = 1e-4, 0.3
    assert ss.stability(rig, "inverted", speed_rpm=speed_rpm, stroke_m=lo * 20).stable
    lo = lo * 20
    while hi - lo > 1e-7:
        mid = (lo + hi) / 2
        if ss.stability(rig, "inverted", speed_rpm=speed_rpm, stroke_m=mid).stable:
            lo = mid
        else:
            hi = mid
    return lo


@pytest.mark.parametrize("make", [_two_equal, _three], ids=["two links", "three links"])
def test_flutter_estimate_is_set_by_the_shortest_mode(make):
    # Acheson 1993 (Proc. R. Soc. Lond. A 443, 239): at high speed the upright chain is lost
    # when the shortest mode's q = stroke / L reaches the zero of the Mathieu value b_1 (q
    # = 0.908, scipy.special.mathieu_b): stroke = 0.908 L_min. Undamped, sine drive, 60000
    # rpm; the estimate is within 5% of the exact edge (the target).
    data = make(drive=ref.sine(0.002, 60000.0))
    rig = ss.rig_from_dict(data)
    est = ss.estimates(rig)
    exact = _upper_stroke_edge(rig, 60000.0)
    assert est.max_stroke_mode == len(data["links"])
    assert est.max_stroke_estimate_m == pytest.approx(exact, rel=0.05)


@pytest.mark.parametrize("make", [_two_equal, _three], ids=["two links", "three links"])
def test_kapitza_minimum_speed_is_set_by_the_longest_mode(make):
    # (A omega)^2 > 2 g L_max (Landau & Lifshitz, Mechanics, sec. 30, per mode as in
    # Acheson 1993): at small stroke the exact lower speed edge approaches it; within 2%
    # at stroke / L_max = 0.02 (the averaging's error is of order (stroke / L)^2 there).
    data = make(drive=ref.sine(0.004, 30000.0))
    rig = ss.rig_from_dict(data)
    lengths = modes(rig).lengths_m
    stroke = 0.02 * lengths[0]
    rig = ss.with_operating_point(rig, stroke_m=stroke)
    est = ss.estimates(rig)
    amplitude = stroke / 2
    kapitza = math.sqrt(2 * G * lengths[0]) / amplitude * 60 / (2 * math.pi)
    assert est.kapitza_min_speed_rpm == pytest.approx(kapitza, rel=1e-12)
    edge = ss.window(rig, "inverted", "speed").low
    assert est.kapitza_min_speed_rpm == pytest.approx(edge, rel=0.02)
