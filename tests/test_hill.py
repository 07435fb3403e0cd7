"""Hill's determinant against Mathieu characteristic values and direct integration."""

import math

import numpy as np
import pytest
from scipy.special import mathieu_a, mathieu_b

from refsolvers import hill_trace_by_integration as trace_by_integration
from shakestill.numerics.hill import default_truncation, hill_trace, needed_harmonics


@pytest.mark.parametrize("q", [0.05, 0.4, 0.908, 2.0, 5.0])
@pytest.mark.parametrize("order", [0, 1, 2, 3, 4])
def test_trace_at_mathieu_characteristic_values(q, order):
    # scipy.special.mathieu_a/b: y'' + (a - 2q cos 2z) y = 0 has a periodic solution
    # (period pi for even order: trace +2; period 2 pi for odd order: trace -2).
    # In Hill's form theta0 = a, theta_1 = -q. Tolerance 1e-8 covers scipy's own accuracy.
    target = 2.0 if order % 2 == 0 else -2.0
    for a in ([mathieu_a(order, q)] + ([mathieu_b(order, q)] if order > 0 else [])):
        R = default_truncation(a, (-q,))
        assert abs(hill_trace(a, (-q,), R) - target) < 1e-8


@pytest.mark.parametrize("theta0, theta", [
    (0.0, (0.3, 0.1)),                 # pole of row 0 exactly
    (4.0, (0.5, -0.2, 0.05)),          # pole of rows +-1 exactly
    (16.0 + 1e-9, (0.7,)),             # next to the poles of rows +-2
    (-3.0, (0.4 + 0.3j, 0.1 - 0.2j)),  # complex harmonics: a waveform with sine terms
    (7.3, (1.5, 0.6, 0.2, 0.05)),
])
def test_trace_matches_direct_integration(theta0, theta):
    # Reference: scipy.integrate.solve_ivp (DOP853, rtol 1e-13); tolerance 1e-9 of
    # max(1, |trace|), the scale on which the engine checks its own convergence.
    R = default_truncation(theta0, theta)
    expected = trace_by_integration(theta0, theta)
    assert abs(hill_trace(theta0, theta, R) - expected) <= 1e-9 * max(1.0, abs(expected))


def test_undriven_trace_is_cosine():
    # Closed form: with no harmonics u = cos(sqrt(theta0) z), trace = 2 cos(pi sqrt(theta0)).
    for theta0 in (0.3, 2.7, 11.0):
        assert hill_trace(theta0, (0.0,), 10) == pytest.approx(2 * math.cos(math.pi * math.sqrt(theta0)),
                                                               abs=1e-13)
    assert hill_trace(-2.0, (0.0,), 10) == pytest.approx(2 * math.cosh(math.pi * math.sqrt(2.0)),
                                                         rel=1e-13)


def test_truncation_error_falls_with_rows():
    # The tail term makes the error fall like R^-7 (fourth-order remainder); between
    # R = 10 and R = 20 it must shrink at least 50-fold (128 expected). Reference for
    # the exact value: scipy.special.mathieu_b(1, 5).
    q, a = 5.0, mathieu_b(1, 5.0)
    e10 = abs(hill_trace(a, (-q,), 10) + 2)
    e20 = abs(hill_trace(a, (-q,), 20) + 2)
    assert e20 < e10 / 50


def test_needed_harmonics_keeps_the_trace():
    # A crank-like fast-falling series: dropping the tail may not move the trace by more than tol.
    theta0, theta = 0.8, tuple(0.4 * 0.05 ** k for k in range(10))
    R = default_truncation(theta0, theta)
    keep = needed_harmonics(theta0, theta, R, tol=1e-12)
    assert keep < len(theta)
    assert abs(hill_trace(theta0, theta[:keep], R) - hill_trace(theta0, theta, R)) <= 1e-12 * 2


@pytest.fixture(scope="module")
def falling_traces():
    # theta_k = 0.8 * 0.3^k, k = 1..8, theta0 = 2.3: the trace with the first k harmonics,
    # k = 1..8, by scipy.integrate.solve_ivp (DOP853, 1e-13), independent of Hill's determinant.
    theta0, theta = 2.3, tuple(0.8 * 0.3 ** k for k in range(1, 9))
    return theta0, theta, [None] + [trace_by_integration(theta0, theta[:k]) for k in range(1, 9)]


@pytest.mark.parametrize("tol", [1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8, 1e-9])
def test_needed_harmonics_is_the_fewest(falling_traces, tol):
    # The documented rule by hand on the solve_ivp traces: the fewest leading harmonics whose
    # trace is within tol * max(1, |full|) of the full trace. The traces' steps (2.7e-4,
    # 4.4e-5, 2.5e-6, 1.5e-7, 9.9e-9, 6.6e-10, 4.3e-11) lie at least 1.5x from every tol,
    # far above solve_ivp's and Hill's own errors (~1e-11), so the answer is sharp.
    theta0, theta, traces = falling_traces
    full = traces[8]
    want = min(k for k in range(1, 9) if abs(traces[k] - full) <= tol * max(1.0, abs(full)))
    R = default_truncation(theta0, theta)
    assert needed_harmonics(theta0, theta, R, tol=tol) == want


@pytest.mark.parametrize("most", [2, 3, 5])
@pytest.mark.parametrize("tol", [1e-4, 1e-5, 1e-6])
def test_needed_harmonics_with_a_ceiling(falling_traces, most, tol):
    # With most < H the documented rule: None when harmonic most + 1 still moves the trace by
    # more than tol (relative to max(1, |trace|)); else the fewest k <= most within tol of the
    # trace with most + 1 harmonics (the rest fall), or None when none is. Hand rule on the
    # solve_ivp traces.
    theta0, theta, traces = falling_traces
    over = traces[most + 1]
    scale = tol * max(1.0, abs(over))
    if abs(traces[most] - over) > scale:
        want = None
    else:
        want = min((k for k in range(1, most + 1) if abs(traces[k] - over) <= scale), default=None)
    R = default_truncation(theta0, theta)
    assert needed_harmonics(theta0, theta, R, tol=tol, most=most) == want


@pytest.mark.parametrize("theta0, theta", [
    (-2e-9, (0.3,)),       # row 0 special, theta0 < 0: sinh(pi x/2)/x by its series (x < 1e-4)
    (2e-9, (0.3,)),        # the same with theta0 > 0: sin(pi x/2)/x by its series
    (3.999999997, (0.3,)),  # rows +-1 special, eps = x - 2 under 1e-4: the series again
    (1.7, (0.3, 1e-9)),    # two harmonics whose three-cycles all fall below the floor
])
def test_trace_next_to_the_poles(theta0, theta):
    # Against scipy.integrate.solve_ivp (DOP853, 1e-13), which agrees with Hill's trace here
    # to about 1e-13; tolerance 1e-11, tighter than the series' leading term (x^2/6 ~ 1e-9)
    # would allow if it were wrong.
    R = default_truncation(theta0, theta)
    assert abs(hill_trace(theta0, theta, R) - trace_by_integration(theta0, theta)) < 1e-11


def test_multipliers_of_a_huge_trace_stay_finite_and_multiply_to_the_decay_squared():
    # rho^2 - t rho + 1 = 0 scaled by d: roots d (t/2 +- sqrt(t^2/4 - 1)); for |t| = 3.2e163
    # the larger is d t (1 - 1/t^2 ...) and the smaller d / t (hand): both finite, their
    # product d^2 (Vieta), where the square t^2 overflowed before.
    from shakestill.numerics.hill import multipliers_from_trace
    for t in (3.2e163, -3.2e163, 5.0, -2.5):
        d = 0.7
        a, b = multipliers_from_trace(t, d)
        want = np.roots([1.0, -t, 1.0]) * d if abs(t) < 1e100 else [d * t, d / t]
        assert sorted([a.real, b.real]) == pytest.approx(sorted(np.real(want)), rel=1e-12)
        assert a * b == pytest.approx(d * d, rel=1e-12)
    # An overflowed trace: the limits of d t and d / t (hand), the smaller 0 (signed inf and
    # 0 exactly: the run-up reads an infinite growth from the first).
    for t in (math.inf, -math.inf):
        a, b = multipliers_from_trace(t, 0.7)
        assert (a, b) == (complex(t), 0j) and b.imag == 0.0
