"""The stroke scan's points and the several-link closeness, by hand from their documented rules;
which way a walked edge turns, against the Mathieu tongue (scipy.special).

equilibria/lines.py documents both: stroke_points walks from ``start`` towards ``stop`` (start
excluded, stop included) in steps of (hi - lo) / STROKE_POINTS (50), cut after 51 steps, the
stop then added; _closeness is minus the smallest distance between two Floquet multipliers.
Numbers are chosen exact in binary so that the hand values compare exactly.
"""

import itertools
import math
from types import SimpleNamespace

import pytest
from scipy.special import mathieu_a, mathieu_b

import refsolvers as ref
import shakestill as ss
from shakestill.equilibria.lines import (STROKE_POINTS, Probe, _closeness, scan_settings,
                                         speed_points, stroke_points, walk)
from shakestill.model.derived import as_model


def test_the_stroke_scan_steps_by_a_fiftieth_of_the_range():
    # range [10, 60]: step 1; from 12 up to 15 and down to 10 (hand: the rule above)
    assert STROKE_POINTS == 50
    assert stroke_points(10.0, 60.0, 12.0, 15.0) == [13.0, 14.0, 15.0]
    assert stroke_points(10.0, 60.0, 12.0, 10.0) == [11.0, 10.0]
    # a stop between two steps is the last point itself
    assert stroke_points(10.0, 60.0, 12.0, 14.5) == [13.0, 14.0, 14.5]
    assert stroke_points(10.0, 60.0, 12.0, 10.5) == [11.0, 10.5]
    # range [0, 25]: step 0.5
    assert stroke_points(0.0, 25.0, 1.0, 2.0) == [1.5, 2.0]
    # no walk when the stop is the start
    assert stroke_points(10.0, 60.0, 12.0, 12.0) == []


def test_an_empty_range_goes_straight_to_the_stop():
    assert stroke_points(5.0, 5.0, 4.0, 5.0) == [5.0]
    assert stroke_points(5.0, 5.0, 6.0, 5.0) == [5.0]


def test_a_far_stop_is_cut_after_51_steps_then_reached():
    # range [0, 50] (step 1) but a stop at 1000: 51 steps (1 .. 51), then the stop itself
    points = stroke_points(0.0, 50.0, 0.0, 1000.0)
    assert points == [float(k) for k in range(1, 52)] + [1000.0]
    points = stroke_points(0.0, 50.0, 0.0, -1000.0)
    assert points == [-float(k) for k in range(1, 52)] + [-1000.0]


def _gap(values):
    return -min(abs(a - b) for a, b in itertools.combinations(values, 2))


@pytest.mark.parametrize("rhos", [
    (0.9 + 0.1j, 0.9 - 0.1j, -0.5 + 0.0j, 0.3 + 0.0j),  # closest: the pair 0.9 +- 0.1j, 0.2
    (0.5 + 0.0j, -0.5 + 0.0j, 0.25 + 0.5j, 0.25 - 0.5j, 0.5 + 0.125j, 0.1 + 0.0j),  # 1st & 5th
    (1.0 + 0.0j, 0.875 + 0.0j, 0.0 + 0.0j, 0.5 + 0.0j),  # only the neighbours 1st, 2nd
])
def test_closeness_is_minus_the_smallest_gap_between_multipliers(rhos):
    want = _gap(rhos)  # by hand: every pair, itertools.combinations
    assert _closeness(SimpleNamespace(multipliers=rhos)) == want
    assert want < 0


def test_one_link_has_no_closeness():
    # one link: two multipliers, the margin alone guides the peak search (-inf: never a peak)
    assert _closeness(SimpleNamespace(multipliers=(0.5 + 0.5j, 0.5 - 0.5j))) == float("-inf")


def test_walked_edges_say_which_way_stability_turns_moving_up():
    """lines.walk through the hanging pendulum's first tongue, up and down in speed. The
    tongue lies between a = b_1(q) and a_1(q) (scipy.special.mathieu_b / mathieu_a, a =
    4 g / (l w^2) falls as the speed rises): moving up the speed line the equilibrium is lost
    at a_1 and gained at b_1, whichever way the walk goes (Edge.gained is about moving up)."""
    length, q, g = 0.2, 0.2, ref.G_STANDARD

    def rpm(a):
        return math.sqrt(4 * g / (length * a)) * 60 / (2 * math.pi)

    low, high = rpm(2.0), rpm(0.25)  # band 1 below the tongue, band 0 above it
    data = ref.rig([ref.link(length, 0.0, [(0.1, length)])], ref.sine(q * length, low))
    model = as_model(ss.rig_from_dict(data))
    stroke = model.rig.drive.stroke_m
    want = [(rpm(mathieu_a(1, q)), False), (rpm(mathieu_b(1, q)), True)]
    for start, stop, order in ((low, high, want), (high, low, want[::-1])):
        corners = [model.at(speed_rpm=v) for v in (low, high)]
        probe = Probe(model, "hanging", lambda x: (x, stroke),
                      scan_settings(model, "hanging", corners))
        edges = list(walk(probe, start, probe(start), speed_points(model, start, stop)))
        assert [e.gained for e in edges] == [w[1] for w in order]
        for e, (x, _) in zip(edges, order):
            assert e.x == pytest.approx(x, rel=1e-8)  # the walk's EDGE_RTOL is 1e-10
