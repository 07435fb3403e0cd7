"""How equilibria/confirm.py reaches an edge, not only where: every point the exact method is
asked about, and what is placed there, against an outside reference.

The rig: a short undamped hanging pendulum (l = 10 mm, point mass) on a 2 mm sine stroke, whose
one-link Hill probe is cheap. References:
- the tongue edges: a = 4 g / (l w^2) meets a_n(q) and b_n(q), q = stroke / l
  (scipy.special.mathieu_a / mathieu_b);
- the margin |trace M| - 2 of the monodromy M (undamped: 2 cosh(0) = 2) by scipy's solve_ivp
  (DOP853, rtol 1e-12, tests/refsolvers.py), a verdict stable where it is negative;
- the path each edge should take, from confirm.py's documented rule (its module docstring):
  a bracket of relative half-width 5e-5 about the predicted edge; if both its verdicts are
  alike, up to 2 more such brackets aimed at the zero of the margin's secant through the last
  two points, while the aim stays within 2e-2 of the prediction; then the brackets of half-width
  1e-3 and 2e-2 (clipped to [last, hi]); the first that confirms aims a tight bracket, clipped to
  it, at its secant, and Brent's method closes it if that misses. Each secant and verdict is
  taken from the reference margin, so the expected points come from outside the engine.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np
import pytest
from scipy import special

import refsolvers as R
import shakestill as ss
from shakestill.equilibria.chart_modes import _island, _walk_on
from shakestill.equilibria.chart_rows import CHART_RTOL, line_edges
from shakestill.equilibria.confirm import _secant, confirm_edges, place_edge, tight_edge
from shakestill.equilibria.lines import Edge, Probe, edge_between, scan_settings
from shakestill.model.derived import as_model

G = R.G_STANDARD
LENGTH, STROKE = 0.01, 0.002
LO, HI = 250.0, 900.0  # the row: both tongues (near 299 and 547-671 rpm) lie inside
RTOL = 1e-4  # passed to Brent's method: looser than EDGE_RTOL (1e-10), so each is told apart
HALF = (5e-5, 1e-3, 2e-2)  # the documented bracket half-widths, tightest first
AIMS = 2  # the documented re-aims of the tightest bracket
REACH = 2e-2  # ... while the aim stays this close to the prediction (relative)
SAME = 1e-9  # two points the same: the engine's and the reference's secants agree to ~1e-12


def rig_data(stroke=STROKE):
    return R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(stroke, 600.0),
                 limits={"speed_rpm": [200.0, 3600.0], "stroke_m": [0.0, 0.01]})


def tongue(order, stroke=STROKE):
    """(low, high) speed of the n-th hanging tongue, scipy.special.mathieu_a/b."""
    q = stroke / LENGTH

    def rpm(a_value):  # a = 4 g / (l w^2) -> w
        return math.sqrt(4 * G / (LENGTH * a_value)) * 60 / (2 * math.pi)
    return rpm(special.mathieu_a(order, q)), rpm(special.mathieu_b(order, q))


@lru_cache(maxsize=None)
def ref_margin(x, stroke=STROKE):
    """|trace M| - 2 of the solve_ivp monodromy at x rpm (undamped, so gamma = 0)."""
    return abs(float(np.trace(R.monodromy(rig_data(stroke), "hanging", speed_rpm=x)))) - 2.0


def ref_stable(x, stroke=STROKE):
    return ref_margin(x, stroke) < 0


def ref_secant(a, b, stroke=STROKE):
    """The reference margin's zero by linear interpolation through a and b, kept in [a, b]."""
    fa, fb = ref_margin(a, stroke), ref_margin(b, stroke)
    return min(b, max(a, a - fa * (b - a) / (fb - fa)))


def expected_path(x, before, gained, last, hi, stroke=STROKE):
    """(points before Brent, the bracket Brent is given or None, the secant edge or None) by
    the documented rule above with the reference margins."""
    points = []

    def tight(aim, lo_end, hi_end):
        a, b = max(lo_end, aim * (1 - HALF[0])), min(hi_end, aim * (1 + HALF[0]))
        if not a < b:
            return None, None, None
        points.extend((a, b))
        verdicts = (ref_stable(a, stroke), ref_stable(b, stroke))
        return (ref_secant(a, b, stroke) if verdicts == (before, gained) else None), a, b

    aim = x
    for _ in range(1 + AIMS):
        edge, a, b = tight(aim, last, hi)
        if edge is not None or a is None or ref_stable(a, stroke) != ref_stable(b, stroke):
            break
        fa, fb = ref_margin(a, stroke), ref_margin(b, stroke)
        aim = a - fa * (b - a) / (fb - fa)
        if not abs(aim / x - 1) < REACH:
            break
    if edge is not None:
        return points, None, edge
    for half in HALF[1:]:
        a, b = max(last, x * (1 - half)), min(hi, x * (1 + half))
        if not a < b:
            return points, None, None
        points.extend((a, b))
        if (ref_stable(a, stroke), ref_stable(b, stroke)) == (before, gained):
            edge, _, _ = tight(ref_secant(a, b, stroke), a, b)
            return points, (None if edge is not None else (a, b)), edge
    return points, None, None


class Recorder(Probe):
    """The engine's probe, remembering every point it is asked about."""

    def __init__(self, *args):
        super().__init__(*args)
        self.points = []

    def __call__(self, x):
        self.points.append(x)
        return super().__call__(x)


@pytest.fixture(scope="module")
def make_probe():
    @lru_cache(maxsize=None)
    def model_of(stroke):
        model = as_model(ss.rig_from_dict(rig_data(stroke)))
        return model, scan_settings(model, "hanging", [model.at(speed_rpm=v) for v in (LO, HI)])

    def make(stroke=STROKE):
        model, settings = model_of(stroke)
        return Recorder(model, "hanging", lambda x: (x, stroke), settings)
    return make


def assert_path(probe, placed, x, before, gained, last, hi, truth, stroke=STROKE):
    """The engine's points are the expected ones; the edge is the expected secant, or Brent's
    result within RTOL of the Mathieu edge ``truth``."""
    points, brent, edge = expected_path(x, before, gained, last, hi, stroke)
    head = probe.points[:len(points)]
    assert len(head) == len(points)
    for got, want in zip(head, points):
        assert got == pytest.approx(want, rel=SAME)
    if brent is None:
        assert probe.count == len(points)
        if edge is None:
            assert placed is None
            return
        assert placed.x == pytest.approx(edge, rel=SAME)
        # the secant's zero lies in a confirmed bracket of half-width 5e-5 about its aim
        assert abs(placed.x / truth - 1) < 2 * HALF[0]
    else:
        # Brent's method inside the confirmed bracket: every further point lies in it, and
        # it stops within its tolerance (xtol = rtol * |b|) of the Mathieu edge.
        assert probe.count > len(points)
        a, b = brent
        assert all(a <= p <= b for p in probe.points[len(points):])
        assert abs(placed.x - truth) <= 2 * RTOL * b
    assert placed.gained is gained


PRINCIPAL = [(1, end, off) for end in ("low", "high")
             for off in (0.0, 3e-4, -3e-4, 8e-4, 1e-3, -1e-3, 2e-3, 5e-3, -5e-3)]
# The second tongue is 2.5e-3 (relative) wide: its margin bends within a re-aim's reach, so
# the first re-aim misses and the second confirms (6 points), or both miss and the 1e-3
# bracket confirms, its secant's tight bracket misses and Brent closes it (10 points and
# Brent: low end +8e-4, +9e-4, high end -8e-4); the high end's wider brackets are clipped at
# the low end placed before it.
SECOND = [(2, end, off) for end in ("low", "high") for off in (-8e-4, -5e-4, 5e-4, 8e-4, 9e-4)]


@pytest.mark.parametrize("order, end, offset", PRINCIPAL + SECOND)
def test_place_edge_takes_the_documented_path(make_probe, order, end, offset):
    # A tongue's ends (Mathieu a_n, b_n), predicted `offset` off (relative).
    # Principal tongue: 0: the first tight bracket confirms (2 points); +-3e-4 to 2e-3: it
    # misses and one secant re-aim confirms (4 points); +-5e-3: two re-aims (6 points).
    lo, hi = tongue(order)
    truth, before, gained = (lo, True, False) if end == "low" else (hi, False, True)
    last = LO if end == "low" else lo
    # the reference confirms the tongue: stable below a_n's speed, unstable inside
    assert ref_stable(lo * (1 - 1e-6)) and not ref_stable(lo * (1 + 1e-6))
    assert not ref_stable(hi * (1 - 1e-6)) and ref_stable(hi * (1 + 1e-6))
    probe = make_probe()
    x = truth * (1 + offset)
    placed = place_edge(probe, Edge(x, gained), before, last, HI, RTOL)
    assert_path(probe, placed, x, before, gained, last, HI, truth)


@pytest.mark.parametrize("offset, points", [(0.0, 2), (3e-4, 4), (8e-4, 4), (1e-3, 4),
                                            (5e-3, 6), (-5e-3, 6), (1e-2, 6), (1.5e-2, 6)])
def test_evaluations_before_brent_are_the_methods_count(make_probe, offset, points):
    # For the low end of the principal tongue, 2 verdicts per bracket tried (the documented
    # rule): the tight bracket alone when the prediction is the edge; one re-aim by the
    # reference margin's secant up to 1e-3 off, two from 5e-3 to 1.5e-2 (the margin's
    # curvature there: the reference path, expected_path, takes as many); never Brent's
    # method on this tongue, whose edge is 1.1e-1 wide and whose margin is smooth across it.
    lo1, _ = tongue(1)
    x = lo1 * (1 + offset)
    want, brent, _ = expected_path(x, True, False, LO, HI)
    assert len(want) == points and brent is None
    probe = make_probe()
    placed = place_edge(probe, Edge(x, False), True, LO, HI, RTOL)
    assert probe.count == points
    assert abs(placed.x / lo1 - 1) <= 2 * HALF[0]


def test_brackets_are_clipped_to_last_and_hi(make_probe):
    # The tight bracket about the edge is cut at `last` below and `hi` above: its points are
    # exactly last and hi (hand), and the secant's zero between them is the Mathieu edge.
    lo1, hi1 = tongue(1)
    probe = make_probe()
    last, hi = lo1 * (1 - 2e-5), lo1 * (1 + 1e-5)
    placed = place_edge(probe, Edge(lo1, False), True, last, hi, RTOL)
    assert probe.points == [last, hi]
    assert placed.x == pytest.approx(ref_secant(last, hi), rel=SAME)
    assert abs(placed.x / lo1 - 1) < 3e-5
    # nothing between last and hi: no point is asked about and nothing is placed
    probe = make_probe()
    assert place_edge(probe, Edge(hi1, True), False, hi1, hi1, RTOL) is None
    assert probe.count == 0


def test_a_prediction_the_exact_method_refuses(make_probe):
    # 420 rpm lies between the second tongue (near 299) and the first (547): stable on both
    # sides by the Mathieu chart, so no bracket confirms an edge there: None, after the
    # documented brackets (the reference's path).
    hi2, lo1 = tongue(2)[1], tongue(1)[0]
    assert hi2 * 1.02 < 420.0 < lo1 / 1.02
    for gained, before in ((False, True), (True, False)):
        probe = make_probe()
        placed = place_edge(probe, Edge(420.0, gained), before, LO, HI, RTOL)
        assert placed is None
        assert_path(probe, placed, 420.0, before, gained, LO, HI, None)
    # an edge predicted the wrong way round at a_1's speed (gaining stability where the
    # reference loses it): the tight bracket's verdicts differ but do not confirm, so no
    # re-aim; the wider brackets do not confirm either: None (the reference's path)
    lo1, _ = tongue(1)
    probe = make_probe()
    placed = place_edge(probe, Edge(lo1, True), False, LO, HI, RTOL)
    assert placed is None
    assert_path(probe, placed, lo1, False, True, LO, HI, None)


def test_tight_edge_only_in_a_confirming_bracket(make_probe):
    # The tight bracket about the Mathieu edge confirms (the secant of the reference margins);
    # 3e-4 off it the bracket holds no edge (reference verdicts alike): None, two points.
    lo1, _ = tongue(1)
    probe = make_probe()
    got = tight_edge(probe, lo1, True, False, LO, HI)
    a, b = lo1 * (1 - HALF[0]), lo1 * (1 + HALF[0])
    assert probe.points == pytest.approx([a, b], rel=SAME)
    assert got.x == pytest.approx(ref_secant(a, b), rel=SAME) and got.gained is False
    probe = make_probe()
    assert ref_stable(lo1 * (1 + 3e-4 - HALF[0])) is ref_stable(lo1 * (1 + 3e-4 + HALF[0]))
    assert tight_edge(probe, lo1 * (1 + 3e-4), True, False, LO, HI) is None
    assert probe.count == 2
    # the verdicts the wrong way round (an edge losing stability asked to gain it): None
    probe = make_probe()
    assert tight_edge(probe, lo1, False, True, LO, HI) is None


def test_secant_by_hand():
    # Linear interpolation (hand): the line through (1, -1) and (3, 1) is zero at 2; through
    # (1, -3) and (3, 1) at 2.5; a zero outside [a, b] is kept at the nearer end; equal
    # margins give the middle.
    assert _secant(1.0, -1.0, 3.0, 1.0) == 2.0
    assert _secant(1.0, -3.0, 3.0, 1.0) == 2.5
    assert _secant(1.0, 1.0, 3.0, 2.0) == 1.0
    assert _secant(1.0, -2.0, 3.0, -1.0) == 3.0
    assert _secant(1.0, 0.5, 3.0, 0.5) == 2.0


def test_a_row_of_two_tongues_is_placed_edge_by_edge(make_probe):
    # Four predicted edges, each 3e-4 off its Mathieu edge (orders 2 and 1): each is placed
    # by its own path (the second of each tongue clipped below at the first's placed edge),
    # and the row is the four Mathieu edges in order, gained alternating.
    (lo2, hi2), (lo1, hi1) = tongue(2), tongue(1)
    truths = [lo2, hi2, lo1, hi1]
    predicted = tuple(Edge(t * (1 + 3e-4), g) for t, g in zip(truths, (False, True) * 2))
    probe = make_probe()
    row = confirm_edges(probe, predicted, True, LO, HI, rtol=RTOL)
    assert [e.gained for e in row] == [False, True, False, True]
    want, last, before = [], LO, True
    for t, e in zip(truths, predicted):
        points, brent, edge = expected_path(e.x, before, e.gained, last, HI)
        assert brent is None and edge is not None
        want += points
        last, before = edge, e.gained
        assert abs(edge / t - 1) < 2 * HALF[0]
    assert probe.points == pytest.approx(want, rel=SAME)
    for got, t in zip(row, truths):
        assert abs(got.x / t - 1) < 2 * HALF[0]


def test_a_row_without_edges_takes_one_verdict_at_its_middle(make_probe):
    # Between the tongues (Mathieu: stable from b_2's speed to a_1's) one verdict at the
    # geometric middle sqrt(lo hi) (the documented point) decides the row.
    lo, hi = 350.0, 500.0
    assert tongue(2)[1] < lo and hi < tongue(1)[0] and ref_stable(math.sqrt(lo * hi))
    probe = make_probe()
    assert confirm_edges(probe, (), True, lo, hi, rtol=RTOL) == ()
    assert probe.points == [pytest.approx(math.sqrt(lo * hi), rel=1e-15)]
    probe = make_probe()
    assert confirm_edges(probe, (), False, lo, hi, rtol=RTOL) is None
    # inside the principal tongue (unstable) the other way round
    lo1, hi1 = tongue(1)
    assert not ref_stable(math.sqrt(lo1 * 1.01 * hi1 * 0.99))
    assert confirm_edges(make_probe(), (), False, lo1 * 1.01, hi1 * 0.99, rtol=RTOL) == ()


def test_refused_rows_keep_the_edges_confirmed_before(make_probe):
    # An edge predicted with the verdict it already has (stable at lo, yet "gained") is
    # refused at once, with no point asked: prefix [] ; an edge the exact method refuses after
    # one it placed leaves that one (the Mathieu edge a_1) in prefix.
    lo1, _ = tongue(1)
    probe, prefix = make_probe(), ["left from before"]
    assert confirm_edges(probe, (Edge(lo1, True),), True, LO, HI, rtol=RTOL, prefix=prefix) is None
    assert prefix == [] and probe.count == 0
    prefix = ["left from before"]
    row = (Edge(lo1, False), Edge(600.0, True))  # 600 rpm: inside the tongue, no edge
    assert confirm_edges(make_probe(), row, True, LO, HI, rtol=RTOL, prefix=prefix) is None
    (kept,) = prefix
    assert abs(kept.x / lo1 - 1) < 2 * HALF[0] and kept.gained is False
    # a row confirmed in full leaves prefix alone
    prefix = ["left from before"]
    got = confirm_edges(make_probe(), (Edge(lo1, False),), True, LO, 600.0, rtol=RTOL,
                        prefix=prefix)
    assert prefix == ["left from before"] and len(got) == 1


@pytest.mark.parametrize("offset", [-9.74e-4, -9.5e-4])
def test_the_re_aims_run_out_on_a_narrower_tongue(make_probe, offset):
    # Half the stroke (q = 0.1): the second tongue is narrower still, and from just under 1e-3
    # below its low end all three tight brackets miss (the documented 2 re-aims run out while
    # the aims stay within 1e-3), then the 1e-3 bracket confirms and aims one more tight one.
    stroke = STROKE / 2
    lo2, _ = tongue(2, stroke)
    probe = make_probe(stroke)
    x = lo2 * (1 + offset)
    placed = place_edge(probe, Edge(x, False), True, LO, HI, RTOL)
    assert_path(probe, placed, x, True, False, LO, HI, lo2, stroke)
    assert probe.count == 10  # three tight brackets, the 1e-3 one, a tight one in it
    assert probe.points[6:8] == pytest.approx([x * (1 - HALF[1]), x * (1 + HALF[1])], rel=1e-15)


def test_brent_closes_the_bracket_to_the_precision_asked(make_probe):
    # Predicted 9e-4 above the second tongue's low end (its margin bends within a re-aim):
    # three tight brackets miss, the 1e-3 bracket confirms and its secant's tight bracket
    # misses (10 points, the reference path), so Brent's method closes that bracket at the
    # precision asked: at 1e-2 relative the bracket (half-width 1e-3, far inside Brent's
    # stopping tolerance 2 rtol |b| + xtol / 2, Brent 1973 ch. 4) is already closed: no
    # more points, an end of that bracket returned. The same through confirm_edges.
    lo2, _ = tongue(2)
    x = lo2 * (1 + 9e-4)
    points, brent, _ = expected_path(x, True, False, LO, HI)
    assert len(points) == 10 and brent is not None
    ends = pytest.approx([x * (1 - HALF[1]), x * (1 + HALF[1])], rel=1e-15)
    assert list(brent) == ends
    probe = make_probe()
    placed = place_edge(probe, Edge(x, False), True, LO, HI, 1e-2)
    assert probe.count == 10 and probe.points[6:8] == ends
    assert [placed.x] == pytest.approx([e for e in ends.expected if e == placed.x])
    probe = make_probe()
    (row,) = confirm_edges(probe, (Edge(x, False),), True, LO, HI, rtol=1e-2)
    assert probe.count == 10 and row.x == placed.x and row.gained is False
    # at 1e-9 it is closed to the Mathieu edge within 1e-9 (relative, plus the reference's)
    probe = make_probe()
    placed = place_edge(probe, Edge(x, False), True, LO, HI, 1e-9)
    assert abs(placed.x / lo2 - 1) < 3e-9

def test_a_refused_row_is_walked_exactly_from_its_last_confirmed_edge(make_probe):
    # chart_modes._walk_on: a row whose confirmation was refused after it placed an edge
    # keeps that edge and walks exactly from just past it to the row's end. From the second
    # tongue's low end the walk must meet its high end and both ends of the principal
    # tongue: the Mathieu edges b_2, a_1, b_1 (scipy.special), within the chart's precision
    # and alternating; a kept edge whose verdict just past it is not the one it gained
    # (stable there, yet said to lose stability) gives None.
    (lo2, hi2), (lo1, hi1) = tongue(2), tongue(1)
    probe = make_probe()
    row = _walk_on(probe, [Edge(lo2, False)], HI)
    assert [e.gained for e in row] == [False, True, False, True]
    assert row[0].x == lo2
    for got, want in zip(row[1:], (hi2, lo1, hi1)):
        assert abs(got.x / want - 1) < 1e-6, (got.x, want)
    assert _walk_on(make_probe(), [Edge(hi2 * 1.01, False)], HI) is None


@pytest.mark.parametrize("operating", [450.0, 600.0], ids=["stable there", "unstable there"])
def test_an_island_left_out_of_the_aim_is_checked_at_its_middle(operating):
    # chart_modes._island (its docstring): a confirmed row that left out an island the modes
    # show from a to b is checked by one exact verdict at the island's middle sqrt(a b); if
    # that is the row's verdict there, the row stands (one point); else both ends are asked
    # and, where both are the row's verdict and the row has no edge inside, the island's two
    # edges are found by Brent's method between the middle and each end, to the chart's
    # precision CHART_RTOL (the points the same as edge_between's at that rtol, side by side);
    # if an end is not the row's verdict, None, with the edges before the island in prefix.
    # The row here lacks the principal tongue: its edges must be the Mathieu edges a_1, b_1
    # (scipy.special), within 1e-7 (Brent stops within 2.5 CHART_RTOL of the root). The
    # rig's own operating speed (stable at 450 rpm, inside the tongue at 600) plays no part:
    # every point is the row's.
    model = as_model(ss.rig_from_dict(R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])],
                                            R.sine(STROKE, operating),
                                            limits={"speed_rpm": [200.0, 3600.0],
                                                    "stroke_m": [0.0, 0.01]})))
    settings = scan_settings(model, "hanging", [model.at(speed_rpm=v) for v in (LO, HI)])

    def probe():
        return Recorder(model, "hanging", lambda x: (x, STROKE), settings)
    (lo2, hi2), (lo1, hi1) = tongue(2), tongue(1)
    assert ref_stable(LO) and ref_stable(450.0) and not ref_stable(600.0)  # solve_ivp
    row = (Edge(lo2, False), Edge(hi2, True))  # stable at LO (solve_ivp, above)
    a, b = 540.0, 680.0  # the modes' island around the principal tongue (547-671 rpm)
    x = math.sqrt(a * b)
    exact = probe()
    prefix = []
    got = _island(exact, row, True, a, b, prefix)
    assert exact.points[:3] == [x, a, b] and prefix == []
    assert got[:2] == row and [e.gained for e in got[2:]] == [False, True]
    assert abs(got[2].x / lo1 - 1) < 1e-7 and abs(got[3].x / hi1 - 1) < 1e-7
    side = probe()
    s = {v: side(v) for v in (x, a, b)}  # in _island's order
    want = (edge_between(side, (a, s[a]), (x, s[x]), rtol=CHART_RTOL),
            edge_between(side, (x, s[x]), (b, s[b]), rtol=CHART_RTOL))
    assert got[2:] == want and exact.points == side.points
    # an island the exact method does not bear out at its middle: the row stands, one point
    exact = probe()
    assert _island(exact, row, True, 400.0, 500.0, prefix) is row
    assert exact.points == [math.sqrt(400.0 * 500.0)] and prefix == []
    # an end inside the tongue (560 rpm: unstable, solve_ivp) is not the row's verdict
    assert not ref_stable(560.0)
    exact = probe()
    assert _island(exact, row, True, 560.0, 680.0, prefix) is None
    assert exact.points == [math.sqrt(560.0 * 680.0), 560.0, 680.0] and prefix == list(row)


def test_a_followed_row_asks_the_documented_brackets_and_spot_checks(make_probe):
    # chart_rows._follow (its docstring and constants): each predicted edge (x, spread) is
    # looked for in a tight bracket, half-width spread x FOLLOW_TIGHT (1/16) + 5e-5 x, then
    # in a wide one, spread / 2 + 0.002 x (clipped to the last edge and the row's end); the
    # edge is then closed by Brent's method; last, 6 verdicts spot-check the row at
    # lo (hi / lo)^(k / 7), k = 1..6, and the 7th at its end. Edges predicted at the Mathieu
    # edges (scipy.special) of both tongues, the principal tongue's low edge 0.4% high with a
    # spread of 1% (outside the tight bracket, inside the wide one).
    (lo2, hi2), (lo1, hi1) = tongue(2), tongue(1)
    predicted = [(lo2, 1e-4 * lo2, False), (hi2, 1e-4 * hi2, True),
                 (lo1 * 1.004, 0.01 * lo1, False), (hi1, 1e-4 * hi1, True)]
    probe = make_probe()
    s0, edges = line_edges(probe, LO, HI, (True, predicted))
    assert probe.points[0] == LO and s0.stable  # stable below both tongues (solve_ivp)
    assert ref_stable(LO)
    assert [e.gained for e in edges] == [False, True, False, True]
    for got, want in zip(edges, (lo2, hi2, lo1, hi1)):
        assert abs(got.x / want - 1) < 1e-7
    x, spread = predicted[2][:2]
    tight = spread / 16 + 5e-5 * x
    wide = spread / 2 + 0.002 * x
    assert abs(x / lo1 - 1) > tight / x and abs(x / lo1 - 1) < wide / x
    for end in (x - tight, x + tight, x - wide, x + wide):
        assert any(p == pytest.approx(end, rel=1e-14) for p in probe.points), end
    checks = [LO * (HI / LO) ** (k / 7) for k in range(1, 7)] + [HI]
    assert probe.points[-7:] == pytest.approx(checks, rel=1e-14)
