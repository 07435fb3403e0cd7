"""Windows of rigs whose scans take the several-link, modal and crank settings, and the walk's
peak search in an unstable stretch, against outside references (issue 12).

- Every edge a window reports is checked where it matters to a user: the verdict of the
  linearised chain's monodromy, integrated by scipy.integrate.solve_ivp (DOP853, 1e-12,
  tests/refsolvers.py) with its multipliers by numpy.linalg.eigvals, flips across the edge:
  stable on the inside at 1e-7 relative from it, unstable on the outside.
- The hidden stable island: the Mathieu stability chart (scipy.special.mathieu_a/b) at q = 5,
  where the stable band between tongue 1 (up to a_1) and tongue 2 (from b_2) is narrow.
- The scan settings' choice of method: by the rule scan_settings documents.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.special import mathieu_a, mathieu_b

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.cycle import CYCLE_MIN_STEPS, chain_steps
from shakestill.equilibria.floquet import Settings, hill_form, mode_forms, modes_decouple
from shakestill.equilibria.lines import Probe, scan_settings, walk
from shakestill.equilibria.windows import window
from shakestill.model.derived import as_model

G = ref.G_STANDARD
LIMITS = {"speed_rpm": [300.0, 6000.0], "stroke_m": [0.0, 0.05]}
# invented two-link chain (tests/test_motion.py's TWO) and a rod-and-bob pendulum
TWO = [ref.link(0.20, 0.04, [(0.01, 0.20)], 2e-6, 1e-4),
       ref.link(0.15, 0.03, [(0.008, 0.12)], 0.0, 1e-4)]
UNDAMPED_TWO = [dict(lk, joint_damping_N_m_s=0.0) for lk in TWO]
ONE = [ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)]
NEAR = 1e-7  # relative step either side of an edge for the reference verdicts


def hill_rows(theta0, theta):
    """Hill rows by the rule hill.default_truncation documents: max(8, harmonics + 2,
    ceil(8 + sqrt|theta0| / 2 + 10 (sum |theta_n|)^(4/7)))."""
    size = sum(abs(c) for c in theta)
    return max(8, len(theta) + 2, math.ceil(8 + math.sqrt(abs(theta0)) / 2
                                            + 10 * size ** (4 / 7)))


def biggest_multiplier(data, equilibrium, axis, x):
    kw = {"speed_rpm": x} if axis == "speed" else {"stroke_m": x}
    return max(abs(np.linalg.eigvals(ref.monodromy(data, equilibrium, **kw))))


def assert_edges_flip(data, equilibrium, axis, win):
    """Each reported edge: the reference's biggest |multiplier| is under 1 + 1e-9 (undamped
    points sit on the unit circle) on the window's side and above 1 + 1e-9 outside it."""
    edges = [(x, side) for x, side, is_edge in ((win.low, -1, win.low_is_edge),
                                                 (win.high, 1, win.high_is_edge)) if is_edge]
    assert edges, win
    for x, side in edges:
        inside = biggest_multiplier(data, equilibrium, axis, x * (1 - side * NEAR))
        outside = biggest_multiplier(data, equilibrium, axis, x * (1 + side * NEAR))
        assert inside < 1 + 1e-9 < outside, (axis, x, inside, outside)


CASES = {
    # damping couples the sway modes: RK monodromies at each point
    "two links, damped": (TWO, ref.sine(0.024, 2700.0)),
    # no damping: the sway modes are exact, each by its Hill determinant
    "two links, undamped": (UNDAMPED_TWO, ref.sine(0.024, 2700.0)),
    # a crank's harmonics: Hill's band against the RK cycle by the cost model
    "one link, crank": (ONE, ref.crank(0.024, 0.08, 2700.0)),
    # both: the sway modes with a crank's harmonics
    "two links, undamped, crank": (UNDAMPED_TWO, ref.crank(0.024, 0.08, 2700.0)),
}


@pytest.mark.parametrize("name", list(CASES))
@pytest.mark.parametrize("axis", ["speed", "stroke"])
def test_window_edges_are_where_the_solve_ivp_verdict_flips(name, axis):
    links, drive = CASES[name]
    data = ref.rig(links, drive, limits=LIMITS)
    win = window(ss.rig_from_dict(data), "inverted", axis)
    assert_edges_flip(data, "inverted", axis, win)


def test_the_scan_method_follows_the_documented_rule():
    # scan_settings: several links with coupled modes -> the chain's Taylor steps chosen at
    # each point with the cycle_phase and drive_tolerance given (the RK sizes step_phase and
    # min_steps are the 2 x 2 cycles' and leave it alone); asked for modes (modal=True) -> the
    # modal predictor;
    # undamped chain -> the exact modes; one link -> Hill (method None), a sine with one
    # harmonic and no RK steps to compare.
    damped = as_model(ss.rig_from_dict(ref.rig(TWO, ref.sine(0.024, 2700.0), limits=LIMITS)))
    corners = [damped.at(speed_rpm=v) for v in (300.0, 6000.0)]
    assert not modes_decouple(damped)
    assert scan_settings(damped, "inverted", corners, step_phase=0.3, min_steps=30) == Settings()
    assert scan_settings(damped, "inverted", corners, cycle_phase=1.4, drive_tolerance=1e-7) == \
        Settings(cycle_phase=1.4, drive_tolerance=1e-7)
    assert scan_settings(damped, "inverted", corners, modal=True).method == "modal"
    undamped = as_model(ss.rig_from_dict(ref.rig(UNDAMPED_TWO, ref.sine(0.024, 2700.0),
                                                 limits=LIMITS)))
    assert modes_decouple(undamped)
    s = scan_settings(undamped, "inverted", [undamped.at(speed_rpm=v) for v in (300.0, 6000.0)])
    assert (s.method, s.harmonics, s.steps) == ("modal", 1, None)
    assert scan_settings(undamped, "inverted", [undamped], modal=False) == Settings()
    one = as_model(ss.rig_from_dict(ref.rig(ONE, ref.sine(0.024, 2700.0), limits=LIMITS)))
    s = scan_settings(one, "inverted", [one])
    assert (s.method, s.harmonics, s.steps) == (None, 1, None)


# ------------------------------------------------------------ a stable island between points

Q = 5.0  # Mathieu q = stroke / l_eq
L_EQ = 0.1  # a point mass on a light rod


def rpm_at(a):
    """The speed giving Mathieu a = 4 g / (l w^2) (hanging; refsolvers.mathieu_aq)."""
    return math.sqrt(4 * G / (L_EQ * a)) * 60 / (2 * math.pi)


def hanging_probe():
    data = ref.rig([ref.link(L_EQ, 0.0, [(0.1, L_EQ)])], ref.sine(Q * L_EQ, rpm_at(2.0)),
                   limits={"speed_rpm": [10.0, 6000.0], "stroke_m": [0.0, 1.0]})
    model = as_model(ss.rig_from_dict(data))
    stroke = model.rig.drive.stroke_m
    corners = [model.at(speed_rpm=rpm_at(a)) for a in (1.0, 3.0)]
    return Probe(model, "hanging", lambda x: (x, stroke), scan_settings(model, "hanging", corners))


def test_a_stable_island_between_three_unstable_points_is_found():
    # Walking down in speed through a = 1.4 and 1.75 (tongue 1, below a_1(5) = 1.858) to 2.5
    # and 2.8 (tongue 2, above b_2(5) = 2.099): unstable points, the margin nearest to stability
    # at the middle one, so the walk searches [2.5, 1.4] and finds the band between: its two
    # edges a_1 and b_2 (scipy.special), in walking order, moving up in speed lost at a_1 and
    # gained at b_2. 1e-8 relative: the walk's EDGE_RTOL is 1e-10 on Hill's exact determinant.
    probe = hanging_probe()
    start = rpm_at(1.4)
    s0 = probe(start)
    points = [rpm_at(1.75), rpm_at(2.5), rpm_at(2.8)]  # the last: tongue 2 again, no edge
    assert not s0.stable and not any(probe(x).stable for x in points)
    edges = list(walk(probe, start, s0, points))
    want = [(rpm_at(mathieu_a(1, Q)), False), (rpm_at(mathieu_b(2, Q)), True)]
    assert [e.gained for e in edges] == [g for _, g in want]
    for e, (x, _) in zip(edges, want):
        assert e.x == pytest.approx(x, rel=1e-8)


def test_a_tongue_only_the_multipliers_closeness_shows_is_found():
    # Damped two-link chain (RK monodromies), walking up in speed through 110, 114 and 135
    # rpm, all stable: the first sway mode's principal tongue (near 2 f1) lies between the last
    # two. The margin (log of the biggest |multiplier|, -gamma / f between tongues) only
    # rises with speed, so it shows no peak; the multipliers' closeness peaks at 114 rpm, and
    # the search it starts finds the tongue. Both edges: the solve_ivp verdict flips there
    # (tests/refsolvers.py), lost moving up at the first, regained at the second.
    data = ref.rig(TWO, ref.sine(0.024, 1000.0), limits=LIMITS)
    model = as_model(ss.rig_from_dict(data))
    corners = [model.at(speed_rpm=v) for v in (100.0, 1000.0)]
    probe = Probe(model, "hanging", lambda x: (x, 0.024), scan_settings(model, "hanging", corners))
    s = [probe(v) for v in (110.0, 114.0, 135.0)]
    assert all(x.stable for x in s) and s[0].margin < s[1].margin < s[2].margin
    edges = list(walk(probe, 110.0, s[0], [114.0, 135.0]))
    assert [e.gained for e in edges] == [False, True]
    assert 114.0 < edges[0].x < edges[1].x < 135.0
    for e, before in zip(edges, (1, -1)):  # the stable side: below the first, above the second
        stable = biggest_multiplier(data, "hanging", "speed", e.x * (1 - before * NEAR))
        unstable = biggest_multiplier(data, "hanging", "speed", e.x * (1 + before * NEAR))
        assert stable < 1 < unstable, (e, stable, unstable)


def walk_at(rtol, a_values, want_a):
    """Walk the q = 5 pendulum through Mathieu a values (down in speed) with ``rtol``: the
    edges must lie within max(rtol, 1e-8) of the speeds of ``want_a``; returns the count of
    stability evaluations the walk took after its start."""
    probe = hanging_probe()
    start = rpm_at(a_values[0])
    s0 = probe(start)
    probe.count = 0
    edges = list(walk(probe, start, s0, [rpm_at(a) for a in a_values[1:]], rtol=rtol))
    assert [e.x for e in edges] == pytest.approx([rpm_at(a) for a in want_a],
                                                 rel=max(rtol, 1e-8))
    return probe.count


def test_a_looser_tolerance_is_passed_on_and_costs_fewer_evaluations():
    # The chart walks with a looser rtol: asked for 1e-4, the walk lands within 1e-4 of the
    # Mathieu edges (scipy.special) with fewer stability evaluations than at the default
    # 1e-10 (Brent's method stops sooner): across the island found between three points, and
    # at a plain crossing (a = 1.0 and 1.5 inside tongue 1, 1.95 in the stable band above
    # a_1(5) = 1.858).
    island = ([1.4, 1.75, 2.5], [mathieu_a(1, Q), mathieu_b(2, Q)])
    plain = ([1.0, 1.5, 1.95], [mathieu_a(1, Q)])
    for a_values, want in (island, plain):
        assert walk_at(1e-4, a_values, want) < walk_at(1e-10, a_values, want)


def test_both_edges_of_a_found_island_get_the_tolerance_asked(monkeypatch):
    # walk(..., rtol): every edge it reports is searched to the rtol asked (its signature and
    # edge_between's), the two about a hidden island (lines._split) too. Each edge search is
    # recorded on its way to edge_between (a spy; default EDGE_RTOL where none is passed):
    # on the island walk of test_a_stable_island_between_three_unstable_points_is_found at
    # rtol 1e-4, two searches, each at 1e-4, each edge within 1e-4 of its Mathieu edge
    # (scipy.special a_1(5), b_2(5)), in walking order (down in speed).
    from shakestill.equilibria import lines
    asked = []
    real = lines.edge_between

    def spy(probe, a, b, *, rtol=lines.EDGE_RTOL):
        asked.append(rtol)
        return real(probe, a, b, rtol=rtol)
    monkeypatch.setattr(lines, "edge_between", spy)
    walk_at(1e-4, [1.4, 1.75, 2.5], [mathieu_a(1, Q), mathieu_b(2, Q)])
    assert asked == [1e-4, 1e-4]


# ------------------------------------------------------------ the scan's points and its caps

def test_speed_points_step_a_tongue_spacing_or_four_percent():
    # speed_points' documented rule, by hand: tongue n of a pendulum of hanging frequency f0
    # sits near 2 f0 / n (Mathieu, a = n^2), evenly spaced in 1/speed by 1 / (2 f0 60) per
    # tongue; a step is PHASE_STEP (0.08) of that spacing in 1/rpm, or SPEED_STEP (4%) of the
    # speed if that is smaller; the stop is the last point. f0 of a point mass on a light rod:
    # sqrt(g / l) / (2 pi) (textbook).
    from shakestill.equilibria.lines import PHASE_STEP, SPEED_STEP, speed_points
    assert (PHASE_STEP, SPEED_STEP) == (0.08, 0.04)
    length = 0.2
    model = as_model(ss.rig_from_dict(ref.rig([ref.link(length, 0.0, [(0.1, length)])],
                                              ref.sine(0.01, 600.0), limits=LIMITS)))
    f0 = math.sqrt(G / length) / (2 * math.pi)
    spacing = 0.08 / (2 * f0 * 60.0)

    def by_hand(start, stop):
        points, v, up = [], start, stop > start
        while (v < stop) if up else (v > stop):
            inv = 1 / v - spacing if up else 1 / v + spacing
            phase = abs(1 / inv - v) if inv > 0 else math.inf
            v = v + min(phase, 0.04 * v) if up else v - min(phase, 0.04 * v)
            points.append(min(v, stop) if up else max(v, stop))
        return points

    for start, stop in ((60.0, 3000.0), (3000.0, 60.0), (200.0, 203.0)):
        want = by_hand(start, stop)
        got = speed_points(model, start, stop)
        assert len(got) == len(want) and got == pytest.approx(want, rel=1e-12)
        assert got[-1] == stop
    assert speed_points(model, 200.0, 200.0) == []


def test_a_probe_counts_and_caps_its_work(monkeypatch):
    # Probe refuses past MAX_EVALUATIONS evaluations and MAX_CYCLE_STEPS integration steps on
    # one line (equilibria/reach.py), with words naming the cap; caps lowered here so that a
    # few calls reach them. The steps are the Taylor cycle's, as each evaluation reports them.
    from shakestill.equilibria import lines
    from shakestill.model.rig import OutOfReach
    damped = as_model(ss.rig_from_dict(ref.rig(TWO, ref.sine(0.024, 2700.0), limits=LIMITS)))

    def probe_of(model):
        return Probe(model, "inverted", lambda x: (x, 0.024),
                     scan_settings(model, "inverted", [model]))

    monkeypatch.setattr(lines, "MAX_EVALUATIONS", 3)
    probe = probe_of(damped)
    steps = [probe(v).work["steps"] for v in (2700.0, 2800.0, 2900.0)]
    assert probe.count == 3 and probe.steps == sum(steps) and min(steps) >= CYCLE_MIN_STEPS
    # a scan point is one monodromy at the steps its own rates ask for (no refinement pass)
    assert steps == [chain_steps(damped.at(speed_rpm=v), "inverted")
                     for v in (2700.0, 2800.0, 2900.0)]
    with pytest.raises(OutOfReach) as info:
        probe(3000.0)
    assert [(p.path, p.message) for p in info.value.problems] == [
        ("limits", "outside what this method can resolve: the scan needed more than 3 "
                   "stability evaluations")]
    monkeypatch.setattr(lines, "MAX_EVALUATIONS", 6000)
    monkeypatch.setattr(lines, "MAX_CYCLE_STEPS", 3 * steps[0])
    probe = probe_of(damped)
    for _ in range(3):
        probe(2700.0)  # 3 x steps[0]: at the cap, not past it
    with pytest.raises(OutOfReach) as info:
        probe(2700.0)
    assert [(p.path, p.message) for p in info.value.problems] == [
        ("limits", "outside what this method can resolve: the scan needed more than "
                   f"{3 * steps[0]} integration steps of the monodromy")]
    # Hill's determinant takes no RK steps: a one-link sine scan never meets the step cap
    monkeypatch.setattr(lines, "MAX_CYCLE_STEPS", 0)
    one = as_model(ss.rig_from_dict(ref.rig(ONE, ref.sine(0.024, 2700.0), limits=LIMITS)))
    probe = probe_of(one)
    assert all(probe(v).stable in (True, False) for v in (2700.0, 2800.0, 2900.0))
    assert probe.steps == 0


def test_affordable_harmonics_follow_the_cost_model():
    # _affordable_harmonics' documented rule, by hand: the most harmonics k (at least 1) such
    # that Hill's band LU with k harmonics, HILL_BAND_US (2 R + 1)(2 k + 1)^2 with R =
    # default_truncation's rows for those k harmonics (hill.py: max(8, k + 2, ceil(8 +
    # sqrt|theta0| / 2 + 10 (sum |theta_n|)^(4/7)))), costs no more than RK_STEP_US x steps;
    # every harmonic when there is no RK cycle to compare. Swept over steps 1 .. 600 on a
    # crank's Hill form (many harmonics).
    from shakestill.equilibria.lines import HILL_BAND_US, RK_STEP_US, _affordable_harmonics
    assert (HILL_BAND_US, RK_STEP_US) == (0.25, 12.0)
    model = as_model(ss.rig_from_dict(ref.rig(ONE, ref.crank(0.024, 0.08, 2700.0),
                                              limits=LIMITS)))
    form = hill_form(model, "inverted")
    n = len(form.theta)
    assert n > 4

    def by_hand(steps):
        k = 1
        while k < n and 0.25 * (2 * hill_rows(form.theta0, form.theta[:k + 1]) + 1) * \
                (2 * k + 3) ** 2 <= 12.0 * steps:
            k += 1
        return k

    got = [_affordable_harmonics(form, s) for s in range(1, 601)]
    assert got == [by_hand(s) for s in range(1, 601)]
    assert got[0] == 1 and got[-1] > 2  # both ends of the rule are met
    assert _affordable_harmonics(form, None) == n
    assert _affordable_harmonics(form, 10 ** 9) == n  # never more harmonics than the drive has


def test_crank_scan_method_follows_the_step_options():
    # A crank's scan takes Hill's determinant when its band costs less than an RK cycle of
    # the steps the options size (cost model above), else the 2 x 2 monodromy with those steps.
    # Here the rate asks for few steps, so the cycle is the floor of two steps per drive
    # harmonic (default_steps' documented floor) and Hill with the harmonics it needs costs
    # more; at least 500 steps (min_steps) or a step phase of 0.05 make the cycle dearer than
    # Hill's band, and Hill is taken with the fewest harmonics whose trace is that of all of
    # them to 1e-12 (hill.needed_harmonics' rule, on the Hill trace test_hill.py pins against
    # scipy), at the corner that needs most.
    one = as_model(ss.rig_from_dict(ref.rig(ONE, ref.crank(0.024, 0.08, 2700.0), limits=LIMITS)))
    corners = [one.at(speed_rpm=v) for v in (300.0, 6000.0)]
    s = scan_settings(one, "inverted", corners)
    assert (s.method, s.steps) == ("monodromy", 2 * one.harmonics.count)
    for options in ({"min_steps": 500}, {"step_phase": 0.05}):
        s = scan_settings(one, "inverted", corners, **options)
        assert (s.method, s.steps) == (None, None), options
        assert s.harmonics == max(fewest_harmonics(hill_form(c, "inverted")) for c in corners)


def fewest_harmonics(form):
    """The fewest leading harmonics whose Hill trace is all of them's to 1e-12."""
    from shakestill.numerics.hill import default_truncation, hill_trace
    rows = default_truncation(form.theta0, form.theta)
    full = hill_trace(form.theta0, form.theta, rows)
    return next(k for k in range(1, len(form.theta) + 1)
                if abs(hill_trace(form.theta0, form.theta[:k], rows) - full)
                <= 1e-12 * max(1.0, abs(full)))


def test_hill_rows_cover_every_corner_and_mode():
    # The scan's Hill rows: the most that any corner's form (one link, or each sway mode)
    # needs by hill.default_truncation's documented rule, for the harmonics kept (a sine: 1).
    one = as_model(ss.rig_from_dict(ref.rig(ONE, ref.sine(0.024, 2700.0), limits=LIMITS)))
    corners = [one.at(speed_rpm=v) for v in (300.0, 6000.0)]
    want = max(hill_rows(f.theta0, f.theta) for f in (hill_form(c, "inverted") for c in corners))
    assert scan_settings(one, "inverted", corners).truncation == want
    two = as_model(ss.rig_from_dict(ref.rig(UNDAMPED_TWO, ref.sine(0.024, 2700.0), limits=LIMITS)))
    corners = [two.at(speed_rpm=v) for v in (300.0, 6000.0)]
    forms = [f for c in corners for f in mode_forms(c, "inverted")]
    assert len(forms) == 4
    assert scan_settings(two, "inverted", corners).truncation == \
        max(hill_rows(f.theta0, f.theta) for f in forms)


def test_sway_modes_of_a_crank_too_costly_for_hill_take_their_monodromies():
    # Undamped two-link chain on a crank: the modes are exact, but at the RK floor of two
    # steps per harmonic (default_steps) Hill's band for the harmonics the trace needs costs
    # more (cost model above), so each mode is taken by its 2 x 2 monodromy with those steps.
    two = as_model(ss.rig_from_dict(ref.rig(UNDAMPED_TWO, ref.crank(0.024, 0.08, 2700.0),
                                            limits=LIMITS)))
    corners = [two.at(speed_rpm=v) for v in (300.0, 6000.0)]
    s = scan_settings(two, "inverted", corners)
    assert (s.method, s.steps, s.truncation) == ("modal", 2 * two.harmonics.count, None)
