"""The stroke scan's points and the several-link closeness, by hand from their documented rules.

equilibria/lines.py documents both: stroke_points walks from ``start`` towards ``stop`` (start
excluded, stop included) in steps of (hi - lo) / STROKE_POINTS (50), cut after 51 steps, the
stop then added; _closeness is minus the smallest distance between two Floquet multipliers.
Numbers are chosen exact in binary so that the hand values compare exactly.
"""

import itertools
from types import SimpleNamespace

import pytest

from shakestill.equilibria.lines import STROKE_POINTS, _closeness, stroke_points


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
