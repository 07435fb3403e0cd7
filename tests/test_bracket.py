"""The bracket closer of the orbit searches (motion/bracket.py) on model problems whose end is
known in closed form."""

import math

import pytest
from shakestill.motion.bracket import Point, close


def saddle_node(p: float, start) -> Point:
    """x' = (p - 1) - x^2 over one unit of time: the stable equilibrium x = sqrt(p - 1)
    exists for p > 1 with multiplier exp(-2 sqrt(p - 1)) and vanishes in a fold at p = 1
    (the saddle-node normal form; Strogatz, Nonlinear Dynamics and Chaos, sec. 3.1)."""
    if p <= 1.0:
        return Point(p, False, "lost", None, None, None, None)
    mu = math.exp(-2.0 * math.sqrt(p - 1.0))
    return Point(p, True, "held", 1.0 - mu, abs(1.0 - mu), 0.0, None)


def damped_crossing(p: float, start) -> Point:
    """A multiplier mu = 0.5 + 0.25 p crosses the unit circle at p = 2 (closed form)."""
    mu = 0.5 + 0.25 * p
    return Point(p, mu < 1.0, "held" if mu < 1.0 else "unstable", 1.0 - mu,
                 abs(1.0 - mu), 0.0, None)


@pytest.mark.parametrize("problem, end, good, bad", [(saddle_node, 1.0, 1.3, 0.9),
                                                     (damped_crossing, 2.0, 1.0, 2.5)])
def test_close_brackets_the_known_end_in_fewer_solves_than_bisection(problem, end, good, bad):
    rtol = 1e-4
    g, b, solves = close(problem(good, None), problem(bad, None), problem, lambda p: None,
                         rtol=rtol)
    # the end lies in the closed bracket, which is rtol wide (closed form above)
    assert min(g.at, b.at) <= end <= max(g.at, b.at)
    assert abs(g.at - b.at) <= rtol * abs(g.at)
    assert g.ok and not b.ok
    bisections = math.ceil(math.log2(abs(good - bad) / (rtol * end)))
    assert solves < bisections  # the point of the module; bisection count: common practice
