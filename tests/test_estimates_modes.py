"""The closed-form estimates off the single-pendulum sine path: a crank drive's mean square
pivot velocity, a rig below the Kapitza speed (no well, no slow sway upright), and a chain
of two links whose sway modes each follow Kapitza's criteria (the source is named beside
each check). tests/test_check_fields.py covers a single pendulum on a sine drive."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, linalg, special
from scipy.optimize import brentq

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.estimates import estimates
from shakestill.render.report import report_text

G = ref.G_STANDARD


def _estimates(data):
    # the check's "estimates" field, without the Floquet work check() does around it
    return estimates(ss.rig_from_dict(data)).as_dict()


def _crank_mean_square(stroke, rod):
    """<(dy/dphi)^2> over a turn of a slider-crank, y = r cos(phi) + sqrt(l^2 - r^2 sin^2 phi)
    (any machine-dynamics text; the derivative taken by hand), by scipy.integrate.quad."""
    r = stroke / 2

    def dy(phi):
        s, c = math.sin(phi), math.cos(phi)
        return -r * s - r * r * s * c / math.sqrt(rod * rod - r * r * s * s)

    value, _ = integrate.quad(lambda p: dy(p) ** 2, 0.0, 2 * math.pi, epsabs=1e-16, epsrel=1e-13)
    return value / (2 * math.pi)


def test_a_crank_drive_uses_its_own_mean_square_velocity():
    """Kills: the crank's RMS taken as the sine's, the sample mean's divisor or square root
    slipped. Landau & Lifshitz, Mechanics, sec. 30, with <v^2> of the slider-crank (quad):
    minimum speed <v^2> = g l, slow sway Omega^2 = <v^2> / l^2 -+ g / l, crest
    cos(theta) = g l / <v^2>. The engine averages 256 phases of a smooth periodic function
    (spectrally accurate): 1e-9 relative."""
    length, mass, stroke, rod, rpm = 0.25, 0.08, 0.03, 0.06, 4000.0
    data = ref.rig([ref.link(length, 0.0, [(mass, length)])], ref.crank(stroke, rod, rpm))
    est = _estimates(data)
    per_rad2 = _crank_mean_square(stroke, rod)
    w = 2 * math.pi * rpm / 60
    v2 = per_rad2 * w * w
    assert est["rms_pivot_velocity_m_s"] == pytest.approx(math.sqrt(v2), rel=1e-9)
    assert est["kapitza_min_speed_rpm"] == pytest.approx(
        math.sqrt(G * length / per_rad2) * 60 / (2 * math.pi), rel=1e-9)
    assert est["inverted_slow_frequency_hz"] == pytest.approx(
        math.sqrt(v2 / length ** 2 - G / length) / (2 * math.pi), rel=1e-9)
    assert est["hanging_slow_frequency_hz"] == pytest.approx(
        math.sqrt(v2 / length ** 2 + G / length) / (2 * math.pi), rel=1e-9)
    crest = math.acos(G * length / v2)
    assert est["release_angle_estimate_rad"] == pytest.approx(crest, rel=1e-9)
    # U_eff = m g l cos + (m l)^2 <v^2> / (2 m l^2) sin^2 (tip mass: s = m l, J = m l^2)
    barrier = mass * G * length * (math.cos(crest) - 1) + mass * v2 / 2 * math.sin(crest) ** 2
    assert est["effective_barrier_J"] == pytest.approx(barrier, rel=1e-9)
    assert est["knock_estimate_rad_s"] == pytest.approx(
        math.sqrt(2 * barrier / (mass * length ** 2)), rel=1e-9)


def test_below_the_kapitza_speed_there_is_no_well_and_no_upright_sway():
    """Kills: the 'no well' branch giving a crest, the slow sway's None turned into a number.
    Landau & Lifshitz, Mechanics, sec. 30: below (A w)^2 = 2 g l the averaged potential has
    its maximum upright (no crest, no barrier, no knock) and Omega^2 < 0 there; hanging
    Omega^2 = (A w)^2 / (2 l^2) + g / l still holds. 0.9 of the edge puts the fast term
    between a third and a half of the weight term (a crest test against the wrong fraction
    would take acos of more than 1)."""
    length, stroke = 0.3, 0.01
    edge = math.sqrt(2 * G * length) / (stroke / 2) * 60 / (2 * math.pi)
    rpm = 0.9 * edge  # (A w)^2 = 1.62 g l: between the crest's 2 g l and 4/3 g l
    data = ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(stroke, rpm))
    est = _estimates(data)
    assert est["inverted_slow_frequency_hz"] is None
    assert est["inverted_sway_modes_hz"] == [None]
    assert est["release_angle_estimate_rad"] == 0.0
    assert est["effective_barrier_J"] == pytest.approx(0.0, abs=1e-15)
    assert est["knock_estimate_rad_s"] == pytest.approx(0.0, abs=1e-6)
    aw2 = (stroke / 2 * 2 * math.pi * rpm / 60) ** 2
    want = math.sqrt(aw2 / (2 * length ** 2) + G / length) / (2 * math.pi)
    assert est["hanging_slow_frequency_hz"] == pytest.approx(want, rel=1e-12)
    assert est["hanging_sway_modes_hz"] == [pytest.approx(want, rel=1e-12)]
    # the report says so in words, with the hanging figure to its three decimals
    text = report_text(ss.check(ss.rig_from_dict(data)))
    assert (f"inverted slow sway none: the estimate has it falling over; hanging about "
            f"{want:.3f} Hz") in text


def _mode_lengths(data):
    """Equivalent length of each sway mode: M v = l K v with M, K of the hanging chain
    (tests/refsolvers.py, scipy.linalg.eigh), longest first (Acheson 1993)."""
    mass, _, k = ref.chain_matrices(data, "hanging")
    return sorted(linalg.eigh(mass, k, eigvals_only=True), reverse=True)


@pytest.mark.parametrize("rpm, upright_stable", [(9000.0, True), (2200.0, False)])
def test_two_links_take_each_criterion_from_its_own_mode(rpm, upright_stable):
    """Kills: the minimum speed read off the shortest mode, the flutter limit off the
    longest, the per-mode sway taken for one mode only or with the wrong sign, min for max.
    Landau & Lifshitz, Mechanics, sec. 30, applied per mode of length l_i (Acheson 1993):
    minimum speed (A w)^2 = 2 g l_1 (longest), flutter stroke q0 l_n (shortest, q0 the zero
    of scipy.special.mathieu_b(1, q)), Omega_i^2 = (A w)^2 / (2 l_i^2) -+ g / l_i. At 2200 rpm
    the longer mode is below its Kapitza speed while the shorter is above it."""
    stroke = 0.02
    data = ref.rig([ref.link(0.2, 0.0, [(0.1, 0.2)]), ref.link(0.15, 0.0, [(0.05, 0.15)])],
                   ref.sine(stroke, rpm))
    est = _estimates(data)
    lengths = _mode_lengths(data)
    assert est["mode_lengths_m"] == pytest.approx(lengths, rel=1e-9)
    assert est["min_speed_mode"] == 1 and est["max_stroke_mode"] == 2
    a, w = stroke / 2, 2 * math.pi * rpm / 60
    assert est["kapitza_min_speed_rpm"] == pytest.approx(
        math.sqrt(2 * G * lengths[0]) / a * 60 / (2 * math.pi), rel=1e-9)
    q_zero = brentq(lambda q: special.mathieu_b(1, q), 0.5, 1.5, xtol=1e-12)
    assert est["max_stroke_estimate_m"] == pytest.approx(q_zero * lengths[-1], rel=1e-6)
    up = [(a * w) ** 2 / (2 * l * l) - G / l for l in lengths]
    down = [math.sqrt((a * w) ** 2 / (2 * l * l) + G / l) / (2 * math.pi) for l in lengths]
    want_up = [math.sqrt(x) / (2 * math.pi) if x > 0 else None for x in up]
    assert (want_up[0] is not None) is upright_stable and want_up[1] is not None
    assert est["inverted_sway_modes_hz"] == [
        None if x is None else pytest.approx(x, rel=1e-9) for x in want_up]
    assert est["hanging_sway_modes_hz"] == pytest.approx(down, rel=1e-9)
    assert est["hanging_slow_frequency_hz"] == pytest.approx(min(down), rel=1e-9)
    if upright_stable:
        assert est["inverted_slow_frequency_hz"] == pytest.approx(min(want_up), rel=1e-9)
    else:
        assert est["inverted_slow_frequency_hz"] is None
    assert np.all(np.diff(est["mode_lengths_m"]) < 0)


def test_a_sampled_drive_averages_over_exactly_one_turn():
    """Kills: the mean square velocity sampled over more or less than one turn (a crank's
    half-turn symmetry hides that; a second harmonic does not). Parseval: for
    y = A cos(phi) + B sin(2 phi), <(dy/dphi)^2> = (A^2 + (2 B)^2) / 2; the samples are the
    exact curve at 16 phases, so the engine's series reproduces it (1e-9 relative)."""
    amp, second, rpm, n = 0.01, 0.003, 3000.0, 16
    ys = [amp * math.cos(2 * math.pi * j / n) + second * math.sin(4 * math.pi * j / n)
          for j in range(n)]
    data = ref.rig([ref.link(0.3, 0.0, [(0.1, 0.3)])], ref.samples(ys, rpm))
    est = _estimates(data)
    w = 2 * math.pi * rpm / 60
    assert est["rms_pivot_velocity_m_s"] == pytest.approx(
        math.sqrt((amp ** 2 + (2 * second) ** 2) / 2) * w, rel=1e-9)


def test_a_rig_at_rest_needs_infinite_speed_and_a_slow_sway_near_the_edge_is_kept():
    """Kills: the minimum speed divided by a zero RMS velocity (stroke 0 is a valid rig file),
    and a slow sway below 1 rad^2/s^2 dropped as if unstable. Landau & Lifshitz, Mechanics,
    sec. 30: with no pivot motion (A w)^2 = 2 g l needs infinite speed; 1% above the edge
    Omega^2 = (A w)^2 / (2 l^2) - g / l = 0.0201 g / l, small but real."""
    length = 0.3
    rest = _estimates(ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(0.0, 3000.0)))
    assert rest["kapitza_min_speed_rpm"] == math.inf
    assert rest["inverted_slow_frequency_hz"] is None
    assert rest["hanging_slow_frequency_hz"] == pytest.approx(
        math.sqrt(G / length) / (2 * math.pi), rel=1e-12)  # the plain pendulum
    stroke = 0.01
    rpm = 1.01 * math.sqrt(2 * G * length) / (stroke / 2) * 60 / (2 * math.pi)
    near = _estimates(ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(stroke, rpm)))
    w2 = 0.0201 * G / length
    assert w2 < 1.0
    assert near["inverted_slow_frequency_hz"] == pytest.approx(
        math.sqrt(w2) / (2 * math.pi), rel=1e-9)
