"""Hill's small parts against outside values: multipliers from a trace, the default truncation.

References: numpy.roots of rho^2 - trace rho + 1 (a real Hill equation's monodromy has
determinant 1, so its multipliers are those roots, times exp(-gamma T) with damping taken
out); scipy.special.mathieu_a / mathieu_b, at which the trace is exactly +-2.
"""
import math
import random

import numpy as np
import pytest
from scipy.special import mathieu_a, mathieu_b

from refsolvers import hill_trace_by_integration as trace_by_integration
from shakestill.numerics.hill import (SPECIAL_DIVISOR, _special_rows, default_truncation, hill_trace,
                                     multipliers_from_trace)


@pytest.mark.parametrize("trace", [-7.5, -2.0, -1.3, 0.0, 0.4, 1.999, 2.0, 2.5, 41.0])
@pytest.mark.parametrize("decay", [1.0, 0.83])
def test_multipliers_are_the_roots_of_the_characteristic_polynomial(trace, decay):
    # numpy.roots, scaled by the decay; each matched within 1e-12 of max(1, |rho|), and the
    # pair's product decay^2 (Liouville: det = exp(-2 gamma T)) to 1e-12.
    got = multipliers_from_trace(trace, decay)
    want = decay * np.roots([1.0, -trace, 1.0])
    for w in want:
        assert min(abs(g - w) for g in got) <= 1e-12 * max(1.0, abs(w))
    assert abs(got[0] * got[1] - decay * decay) <= 1e-12 * max(1.0, abs(got[0] * got[1]))


@pytest.mark.parametrize("sign", [1.0, -1.0])
def test_an_infinite_trace_gives_an_infinite_multiplier_of_its_sign(sign):
    # The documented limit: rho = trace - 1/trace + ... -> +-inf, its partner 1/rho -> 0.
    big, small = multipliers_from_trace(sign * math.inf, 0.9)
    assert big == complex(sign * math.inf) and small == 0j


CHARACTERISTIC = [(mathieu_a, 0), (mathieu_b, 1), (mathieu_a, 2), (mathieu_b, 3), (mathieu_a, 5)]


@pytest.mark.parametrize("q", [0.02, 0.7, 3.0, 9.0, 25.0])
@pytest.mark.parametrize("kind, order", CHARACTERISTIC)
def test_the_default_truncation_holds_the_trace_at_mathieu_values(q, kind, order):
    # At a = mathieu_a/b(order, q) the equation y'' + (a - 2 q cos 2z) y = 0 has a solution
    # of period pi (even order: trace +2) or 2 pi (odd: -2). Hill's trace with the default
    # rows within 3e-8 (measured up to 2.1e-8 at q = 25, order 0; 1e-10 and less for q <= 9),
    # and 20 rows more move it by under 1e-8 of max(1, |trace|), the engine's own acceptance
    # of a refinement (floquet.CONVERGENCE_TOLERANCE): the default rows pass that check.
    a = float(kind(order, q))
    theta = (-q,)
    R = default_truncation(a, theta)
    want = 2.0 if order % 2 == 0 else -2.0
    assert abs(hill_trace(a, theta, R) - want) <= 3e-8
    finer = hill_trace(a, theta, R + 20)
    assert abs(hill_trace(a, theta, R) - finer) <= 1e-8 * max(1.0, abs(finer))


@pytest.mark.parametrize("theta0, theta", [
    (2.5, (0.7, 0.3)), (-3.3, (1.2, -0.5, 0.2)), (40.0, (6.0, 2.5)),
    (0.5, tuple(2.0 * 0.4 ** k for k in range(1, 9))),
])
def test_the_default_truncation_is_converged_with_several_harmonics(theta0, theta):
    # No closed form: the trace at the default rows against 30 rows more, within 1e-9 of
    # max(1, |trace|) (measured 1.1e-10 to 8.7e-10 on these; the check accepts 1e-8).
    R = default_truncation(theta0, theta)
    full = hill_trace(theta0, theta, R + 30)
    assert abs(hill_trace(theta0, theta, R) - full) <= 1e-9 * max(1.0, abs(full))


@pytest.mark.parametrize("theta0, theta", [
    (4.3, (0.5,)),          # rows +-1 within 1 of the pole: the sine factor's paired form
    (16.6, (0.8,)),         # rows +-2 likewise, eps ~ 0.07
    (0.3, (0.4,)),          # row 0 special, theta0 > 0
    (-0.4, (0.4,)),         # row 0 special, theta0 < 0 (sinh)
    (4.0 + 1e-10, (0.3, 0.1)),  # a pivot of 1e-10 on the diagonal: pivoting is needed
    (2.5, (0.0, 0.3)),      # a zero first harmonic: its tail term is zero, the next one is not
])
def test_traces_next_to_the_poles_at_ordinary_points(theta0, theta):
    # Away from the Mathieu characteristic values the trace is not +-2, so the sine factor and
    # the determinant both count (at a characteristic value the determinant vanishes and
    # hides the factor). solve_ivp's trace, 1e-9 of max(1, |trace|).
    want = trace_by_integration(theta0, theta)
    got = hill_trace(theta0, theta, default_truncation(theta0, theta))
    assert abs(got - want) <= 1e-9 * max(1.0, abs(want)), (got, want)


def test_a_vanishing_column_gives_the_undriven_trace():
    # theta0 = 4 exactly with no drive: row 1 is all zero, the determinant 0, and the trace
    # is the undriven 2 cos(pi sqrt(4)) = 2.
    assert hill_trace(4.0, (0.0, 0.0), 8) == pytest.approx(2.0, abs=1e-15)


def test_the_truncation_may_equal_the_harmonics_but_not_fall_below():
    # hill_trace's documented floor: rows -R..R with R at least the number of harmonics.
    for theta in ((0.3,), (0.3, 0.1)):
        assert math.isfinite(hill_trace(1.7, theta, len(theta)))
    with pytest.raises(ValueError, match="^truncation: must be at least the number of harmonics$"):
        hill_trace(1.7, (0.3, 0.1), 1)


def test_many_small_harmonics_get_rows_for_every_one():
    # Thirty tiny harmonics: the rows must cover them all (at least H + 2) or Hill's
    # determinant cannot hold them; the trace then matches solve_ivp to 1e-10.
    theta = tuple(1e-4 * 0.7 ** k for k in range(30))
    R = default_truncation(1.3, theta)
    assert R >= len(theta)
    assert abs(hill_trace(1.3, theta, R) - trace_by_integration(1.3, theta)) <= 1e-10


def test_an_overflowing_trace_is_plus_infinity():
    # theta0 = -1e6: sinh(pi * 1000 / 2) overflows; the trace 2 cosh(...) is +inf, said so.
    assert hill_trace(-1e6, (0.1,), default_truncation(-1e6, (0.1,))) == math.inf


def test_needed_harmonics_scale_the_tolerance_by_a_large_trace():
    # The documented rule relative to max(1, |trace|): on an unstable point with |trace| ~ 72
    # the steps 0.40, 5.5e-3, 5.8e-5 against tol x 72 give 2 harmonics at 1e-3 and 3 at 1e-5
    # (each step at least 12x from its threshold), where an absolute rule would keep all 4;
    # the rule by hand on solve_ivp's traces.
    from shakestill.numerics.hill import needed_harmonics
    theta0, theta = -2.0, (0.9, 0.1, 0.01, 0.001)
    traces = [None] + [trace_by_integration(theta0, theta[:k]) for k in range(1, 5)]
    full = traces[4]
    assert abs(full) > 10
    for tol in (1e-3, 1e-5):
        want = min(k for k in range(1, 5) if abs(traces[k] - full) <= tol * max(1.0, abs(full)))
        got = needed_harmonics(theta0, theta, default_truncation(theta0, theta), tol=tol)
        assert got == want, (tol, got, want)


def test_special_rows_are_the_rows_the_definition_names():
    # The rows left unnormalised are, by definition (Whittaker & Watson sec. 19.4 divide
    # row r by theta0 - 4 r^2; hill.py keeps those with |theta0 - 4 r^2| < 1 whole), every r
    # in -R..R meeting that test: counted here over all 2R + 1 rows, at random theta0 and
    # right at the poles 4 k^2 +- 1, against the few rows the engine tries.
    rng = random.Random(19)
    thetas = [rng.uniform(-20.0, 40000.0) for _ in range(3000)]
    thetas += [4 * k * k + d for k in range(120) for d in (-1.0, -0.999999, 0.0, 0.999999, 1.0)]
    thetas += [-1.0, -0.5, 0.0, 0.5, 1.0, math.inf, -math.inf, math.nan]
    for theta0 in thetas:
        for truncation in (1, 4, 25, 110):
            want = [r for r in range(-truncation, truncation + 1)
                    if abs(theta0 - 4 * r * r) < SPECIAL_DIVISOR]
            assert _special_rows(theta0, truncation) == want, (theta0, truncation)
