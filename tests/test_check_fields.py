"""Every number the check report leads with, against an independent value: margins, window
ends, the nearest margin and its flag, the peak acceleration in g, and the closed-form
estimates printed beside the exact values (the source is named beside each check).

A deliberate fault the suite must kill is named in each test's docstring: swapped
speed-down / speed-up margins, a window end's label flipped, a factor slipped in an
estimate."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special
from scipy.optimize import brentq

import refsolvers as ref
import shakestill as ss
from test_ref_mathieu import SCENARIOS, STROKE_LIMITS, SPEED_LIMITS, reference_for

G = ref.G_STANDARD
REL = 1e-6  # the windows' tolerance (test_ref_mathieu.py); margins inherit it


def _stable_cases():
    for name, data, l_eq in SCENARIOS:
        for eq in ("inverted", "hanging"):
            speed_ref, stroke_ref = reference_for(data, l_eq, eq)
            if speed_ref is not None:
                yield pytest.param(data, eq, speed_ref, stroke_ref, id=f"{name}-{eq}")


@pytest.mark.parametrize("data, eq, speed_ref, stroke_ref", list(_stable_cases()))
def test_margins_and_window_ends_follow_the_mathieu_windows(data, eq, speed_ref, stroke_ref):
    """Kills: speed_down and speed_up swapped; an 'edge' end called 'limit' or back.
    Reference: the windows from scipy.special.mathieu_a / mathieu_b (tests/refsolvers.py);
    a margin is |end - operating point| / operating point in per cent (the report's
    definition, common practice, no source); an end is an 'edge' unless it is the limit."""
    result = ss.check(ss.rig_from_dict(data))[eq]
    speed, stroke = data["drive"]["speed_rpm"], data["drive"]["stroke_m"]
    want = {"speed_down": (speed - speed_ref[0]) / speed * 100,
            "speed_up": (speed_ref[1] - speed) / speed * 100,
            "stroke_down": (stroke - stroke_ref[0]) / stroke * 100,
            "stroke_up": (stroke_ref[1] - stroke) / stroke * 100}
    for key, value in want.items():
        # a window end to 1e-6 relative moves its margin by 1e-6 of the end, in per cent
        end_scale = (speed_ref if key.startswith("speed") else stroke_ref)[
            1 if key.endswith("up") else 0]
        here = speed if key.startswith("speed") else stroke
        assert result["margins_percent"][key] == pytest.approx(
            value, abs=100 * REL * end_scale / here + 1e-9), key
    ends = {"speed_low": (speed_ref[0], SPEED_LIMITS[0]),
            "speed_high": (speed_ref[1], SPEED_LIMITS[1]),
            "stroke_low": (stroke_ref[0], STROKE_LIMITS[0]),
            "stroke_high": (stroke_ref[1], STROKE_LIMITS[1])}
    for key, (end, limit) in ends.items():
        want_kind = "limit" if math.isclose(end, limit, rel_tol=1e-9, abs_tol=1e-12) else "edge"
        assert result["window_ends"][key] == want_kind, key
    nearest = min(want.values())
    assert result["nearest_margin_percent"] == pytest.approx(nearest, abs=1e-4)
    assert result["close_to_edge"] is (nearest < 10.0)


def test_close_to_edge_is_raised_just_inside_an_edge():
    """Kills: the flag's comparison turned round. At 2% above the Kapitza edge of a tip mass
    (Landau & Lifshitz, Mechanics, sec. 30: (A w)^2 > 2 g l), the nearest margin is about
    2% and the flag is up; at 40% above it is down (the report's 10% rule)."""
    l, stroke = 0.25, 0.01
    edge_rpm = math.sqrt(2 * G * l) / (stroke / 2) * 60 / (2 * math.pi)
    for factor, flagged in ((1.02, True), (1.4, False)):
        data = ref.rig([ref.link(l, 0.0, [(0.1, l)])], ref.sine(stroke, edge_rpm * factor),
                       limits={"speed_rpm": [10.0, 60000.0], "stroke_m": [0.0, 0.5]})
        inv = ss.check(ss.rig_from_dict(data))["inverted"]
        assert inv["close_to_edge"] is flagged
        # the exact edge sits within the averaging's error of Kapitza's: margins to 1%
        assert inv["margins_percent"]["speed_down"] == pytest.approx(
            (factor - 1) / factor * 100, abs=1.0)


@pytest.mark.parametrize("drive, peak", [
    # sine: y = (s/2) cos(wt), peak |y''| = (s/2) w^2
    (ref.sine(0.03, 1800.0), 0.015 * (2 * math.pi * 30.0) ** 2),
    # slider-crank at top dead centre: r w^2 (1 + r / l) (any machine-dynamics text, e.g.
    # Shigley's Theory of Machines and Mechanisms; value from memory)
    (ref.crank(0.03, 0.09, 1800.0), 0.015 * (2 * math.pi * 30.0) ** 2 * (1 + 0.015 / 0.09)),
])
def test_peak_acceleration_in_g_is_the_closed_form_over_standard_gravity(drive, peak):
    """Kills: g0 slipped (9.81 for 9.80665) or the crank's 1 + r/l lost."""
    data = ref.rig([ref.link(0.25, 0.05, [(0.05, 0.25)])], drive)
    result = ss.check(ss.rig_from_dict(data))
    assert result["peak_accel_m_s2"] == pytest.approx(peak, rel=1e-9)
    assert result["peak_accel_g"] == pytest.approx(peak / 9.80665, rel=1e-9)  # CGPM 1901


@pytest.mark.parametrize("stroke, rpm", [(0.02, 3000.0), (0.006, 9000.0)])
def test_kapitza_estimates_are_their_published_formulas(stroke, rpm):
    """Kills: a factor 2 in <v^2>, a sign in the slow sway, q/2 for q in the flutter limit.
    Landau & Lifshitz, Mechanics, sec. 30, for a sine drive of amplitude A = stroke/2:
    minimum speed (A w)^2 = 2 g l; slow sway Omega^2 = (A w)^2 / (2 l^2) -+ g / l
    (inverted, hanging); the flutter stroke 2 A = q l at the zero q of b_1(q)
    (scipy.special.mathieu_b); the effective potential's crest cos(theta) = 2 g l / (A w)^2
    and the knock that reaches it, sqrt(2 barrier / I)."""
    length, mass, rod = 0.3, 0.05, 0.02
    data = ref.rig([ref.link(length, rod, [(mass, length)])], ref.sine(stroke, rpm))
    est = ss.check(ss.rig_from_dict(data))["estimates"]
    inertia = rod * length ** 2 / 3 + mass * length ** 2
    moment = rod * length / 2 + mass * length
    l = inertia / moment
    a, w = stroke / 2, 2 * math.pi * rpm / 60
    assert est["l_eq_m"] == pytest.approx(l, rel=1e-12)
    assert est["kapitza_min_speed_rpm"] == pytest.approx(
        math.sqrt(2 * G * l) / a * 60 / (2 * math.pi), rel=1e-12)
    inv2 = (a * w) ** 2 / (2 * l * l) - G / l
    assert est["inverted_slow_frequency_hz"] == pytest.approx(
        math.sqrt(inv2) / (2 * math.pi), rel=1e-12)
    assert est["hanging_slow_frequency_hz"] == pytest.approx(
        math.sqrt((a * w) ** 2 / (2 * l * l) + G / l) / (2 * math.pi), rel=1e-12)
    q_zero = brentq(lambda q: special.mathieu_b(1, q), 0.5, 1.5, xtol=1e-12)
    assert est["max_stroke_estimate_m"] == pytest.approx(q_zero * l, rel=1e-6)
    crest = math.acos(2 * G * l / (a * w) ** 2)
    assert est["release_angle_estimate_rad"] == pytest.approx(crest, rel=1e-12)
    weight, fast = moment * G, moment ** 2 * (a * w) ** 2 / (4 * inertia)
    barrier = (weight * math.cos(crest) + fast * math.sin(crest) ** 2) - weight
    assert est["effective_barrier_J"] == pytest.approx(barrier, rel=1e-10)
    assert est["knock_estimate_rad_s"] == pytest.approx(math.sqrt(2 * barrier / inertia),
                                                        rel=1e-10)


def test_the_report_words_carry_the_same_numbers():
    """Kills: the words reading another field than the JSON (the demo rig's report)."""
    rig = ss.demo_rig()
    result = ss.check(rig)
    from shakestill.render.report import report_text
    text = report_text(result)
    # one link: no modes to mix (hand), and no word of it
    assert result["modes"]["damper_mixing"] == 0.0 and "mix the sway modes" not in text
    inv = result["inverted"]
    lo, hi = inv["speed_window_rpm"]
    assert f"speed window: {lo:,.0f} rpm (stability edge, {inv['margins_percent']['speed_down']:.1f}% below)" in text
    assert f"to {hi:,.0f} rpm (rig limit, {inv['margins_percent']['speed_up']:.1f}% above)" in text
    assert f"({result['peak_accel_g']:.1f} g)" in text
    assert f"inverted needs more than about {result['estimates']['kapitza_min_speed_rpm']:,.0f} rpm" in text


def _floquet_reference(data, eq):
    """Multipliers of one turn from scipy.integrate.solve_ivp (tests/refsolvers.py)."""
    return np.linalg.eigvals(ref.monodromy(data, eq))


@pytest.mark.parametrize("rpm, upright", [(3000.0, True), (1500.0, False)])
def test_the_floquet_fields_and_the_rig_echo_follow_the_references(rpm, upright):
    """Kills: a Floquet field renamed or dropped, the slow sway or the multipliers read from
    the wrong place, the windows kept for an unstable point, the rig's own numbers echoed
    wrong. Multipliers: eigenvalues of the solve_ivp monodromy (rtol 1e-12; the engine's to
    1e-7); the slow sway of a point stable in the Kapitza regime: |arg mu| f / (2 pi) (the
    Floquet exponent, common practice, no source); mass properties: tests/refsolvers.py
    (parallel-axis theorem). At 1500 rpm the tip mass is below its Kapitza speed
    (Landau & Lifshitz, sec. 30: (A w)^2 < 2 g l): upright is unstable, windows null."""
    length, stroke = 0.25, 0.02
    data = ref.rig([ref.link(length, 0.0, [(0.1, length)], damping=2e-4)],
                   ref.sine(stroke, rpm), title="Echo rig")
    result = ss.check(ss.rig_from_dict(data))
    assert result["title"] == "Echo rig"
    assert result["speed_rpm"] == rpm and result["stroke_m"] == stroke
    assert result["waveform"] == "sine" and result["frequency_hz"] == pytest.approx(rpm / 60)
    assert result["limits"] == {"speed_rpm": [10.0, 60000.0], "stroke_m": [0.0, 0.5]}
    props = ref.properties(data)
    for key in ("total_mass_kg", "first_moment_kg_m", "inertia_about_pivot_kg_m2", "l_eq_m"):
        assert result["properties"][key] == pytest.approx(props[key], rel=1e-12), key
    assert result["properties"]["hanging_frequencies_hz"] == [
        pytest.approx(props["hanging_frequency_hz"], rel=1e-9)]
    # centre of mass: first moment over mass (definition); one link has no modes to couple
    assert result["properties"]["centre_of_mass_m"] == pytest.approx(
        props["first_moment_kg_m"] / props["total_mass_kg"], rel=1e-12)
    assert result["modes"]["equivalent_lengths_m"] == [pytest.approx(length, rel=1e-12)]
    assert result["modes"]["damping_coupling"] == 0.0
    assert result["converged"] is True
    f = rpm / 60
    for eq, stable in (("hanging", True), ("inverted", upright)):
        got = result[eq]
        mu = _floquet_reference(data, eq)
        assert got["stable"] is stable, eq
        assert got["converged"] is True, eq
        order = lambda z: (z.real, z.imag)  # one order for both lists
        assert sorted((complex(re, im) for re, im in got["multipliers"]), key=order) == \
            pytest.approx(sorted(mu, key=order), abs=1e-7), eq
        assert got["max_multiplier"] == pytest.approx(max(abs(mu)), abs=1e-7), eq
        if stable:
            assert max(abs(mu)) < 1.0  # the joint damping makes the point strictly stable
            slow = abs(np.angle(mu[0])) * f / (2 * math.pi)
            assert got["slow_frequency_hz"] == pytest.approx(slow, rel=1e-6), eq
            assert got["sway_modes_hz"] == [pytest.approx(slow, rel=1e-6)], eq
            assert got["speed_window_rpm"][0] < rpm < got["speed_window_rpm"][1], eq
            assert got["stroke_window_m"][0] < stroke < got["stroke_window_m"][1], eq
            assert got["messages"] == [], eq
            # the two scans' sentences, speed then stroke, joined once (the report prints them)
            speed_words, stroke_words = got["scan"].split("; ")
            assert speed_words.startswith("scanned every") and "speed" in speed_words, eq
            assert stroke_words.startswith("scanned") and "strokes" in stroke_words, eq
        else:
            assert max(abs(mu)) > 1.0
            assert got["slow_frequency_hz"] is None and got["sway_modes_hz"] is None
            assert got["speed_window_rpm"] is None and got["stroke_window_m"] is None
            assert got["nearest_margin_percent"] is None and got["close_to_edge"] is False
            assert len(got["messages"]) == 1 and "unstable" in got["messages"][0]
        assert got["method"] in ("hill", "monodromy"), eq
        # a converged result's error estimate is within the 1e-7 held to above
        assert 0.0 <= got["error_estimate"] < 1e-7, eq
        assert got["evaluations"] >= 3, eq  # the point itself, and each window's probes


def test_a_rig_at_rest_has_no_stroke_margins():
    """Kills: a margin taken as a per cent of a zero stroke (a crash) or of the wrong zero.
    A still pivot (stroke 0, a valid rig file) leaves a plain pendulum: hanging stable with
    the frequency sqrt(g / l) / (2 pi) (tip mass, any mechanics text), the stroke margins
    null because there is no stroke to take a per cent of (the report's definition)."""
    length = 0.25
    data = ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(0.0, 3000.0))
    hanging = ss.check(ss.rig_from_dict(data))["hanging"]
    assert hanging["stable"] is True
    assert hanging["slow_frequency_hz"] == pytest.approx(
        math.sqrt(G / length) / (2 * math.pi), rel=1e-6)
    assert hanging["margins_percent"]["stroke_down"] is None
    assert hanging["margins_percent"]["stroke_up"] is None
    assert hanging["margins_percent"]["speed_up"] == pytest.approx(
        (60000.0 - 3000.0) / 3000.0 * 100, rel=1e-9)  # the rig limit, no edge above
