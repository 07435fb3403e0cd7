"""The rows beyond Hill's truncation, term by term, against numpy on the determinant's matrix.

Hill's normalised determinant is det(I + A), A zero on the diagonal and, in row r, theta_k /
(theta0 - 4 r^2) in column r - k and conj(theta_k) / (theta0 - 4 r^2) in column r + k
(Whittaker & Watson sec. 19.4). log det(I + A) = -tr(A^2) / 2 + tr(A^3) / 3 - ..., so the
rows past R add, to third order, -(1/2) and (1/3) of the closed walks of two and three steps
that leave rows -R..R. numpy sums those walks on the matrix itself (matrix powers, rows far
past R), independently of the engine's cycle bookkeeping in numerics/hill.py.
"""
import numpy as np
import pytest

from shakestill.numerics.hill import (THIRD_ORDER_ROWS, _tail_log_correction, _tail_third_order,
                                      default_truncation)


def hill_matrix(theta0, theta, rows):
    """A on rows -rows..rows (no row near a pole: |theta0 - 4 r^2| >= 1 is assumed)."""
    r = np.arange(-rows, rows + 1)
    inv = 1.0 / (theta0 - 4.0 * r * r)
    n = len(r)
    a = np.zeros((n, n), dtype=complex)
    for k, c in enumerate(theta, start=1):
        idx = np.arange(k, n)
        a[idx, idx - k] = c * inv[idx]                 # column r - k carries theta_k
        a[idx - k, idx] = np.conj(c) * inv[idx - k]    # column r + k carries conj(theta_k)
    return a


def walks_leaving(theta0, theta, R, steps, starts, rows):
    """Sum over starting rows |r| <= starts of the closed walks of ``steps`` steps from r
    that visit a row outside -R..R (rows up to ``rows`` in the matrix)."""
    a = hill_matrix(theta0, theta, rows)
    whole = np.diag(np.linalg.matrix_power(a, steps))
    inside = np.diag(np.linalg.matrix_power(a[rows - R:rows + R + 1, rows - R:rows + R + 1], steps))
    r = np.arange(-rows, rows + 1)
    total = whole[np.abs(r) <= starts].sum() - inside.sum()
    return total


CASES = [
    (2.5, (0.7, 0.3)),                          # two real harmonics
    (-3.3, (1.2, -0.5, 0.2)),                   # upright-like theta0 < 0, three harmonics
    (6.5, (0.9 * np.exp(0.4j), 0.35 * np.exp(-1.1j))),  # complex: a drive with a phase
    (0.5, tuple(2.0 * 0.4 ** k for k in range(1, 6))),  # a crank-like falling series
]


@pytest.mark.parametrize("theta0, theta", CASES)
@pytest.mark.parametrize("extra_rows", [0, 5])
def test_third_order_tail_is_a_third_of_the_three_walks_leaving_the_rows(theta0, theta, extra_rows):
    # (1/3) of every closed three-step walk that starts within R + THIRD_ORDER_ROWS and leaves
    # -R..R (its other rows may lie further out: the matrix reaches 4 harmonics past them);
    # three-cycles whose tail sum is below 1e-15 are dropped by the engine, so 1e-14
    # absolute, and 1e-12 relative to the term.
    R = default_truncation(theta0, theta) + extra_rows
    reach = R + THIRD_ORDER_ROWS
    want = walks_leaving(theta0, theta, R, 3, reach, reach + 4 * len(theta)).real / 3.0
    got = _tail_third_order(theta0, theta, R)
    assert abs(got - want) <= 1e-14 + 1e-12 * abs(want), (got, want)
    assert abs(want) > 1e-13  # the term is there to be checked


@pytest.mark.parametrize("theta0, theta", CASES)
def test_second_order_tail_is_half_the_two_walks_leaving_the_rows(theta0, theta):
    # -(1/2) of the closed two-step walks that leave -R..R. By matrix powers on rows to R + 60
    # they are, per harmonic k, 2 |theta_k|^2 sum_{r > R} 1 / ((theta0 - 4 r^2)(theta0 -
    # 4 (r - k)^2)) (checked to 1e-10 on those rows); that sum taken by numpy over two million
    # rows (what is left is below 1 / (48 * 2e6^3), 1e-21) is the reference. The engine sums
    # 32 rows exactly and the rest by the midpoint rule with its first Euler-Maclaurin term,
    # whose error is of order x^-7 at x ~ R + 32: measured 5e-9 to 3e-8 of the term (about
    # 1e-13 of the trace); 1e-7 of the term, 500x tighter than the x^-5 term it carries.
    R = default_truncation(theta0, theta)

    def per_harmonic(last):
        r = np.arange(R + 1, last + 1, dtype=float)
        return -sum(2.0 * abs(c) ** 2 *
                    np.sum(1.0 / ((theta0 - 4 * r * r) * (theta0 - 4 * (r - k) ** 2))[r - k <= last])
                    for k, c in enumerate(theta, start=1))

    small = R + 60
    by_matrix = -walks_leaving(theta0, theta, R, 2, small, small).real / 2.0
    assert abs(by_matrix - per_harmonic(small)) <= 1e-10 * abs(by_matrix)
    want = per_harmonic(R + 2_000_000)
    got = _tail_log_correction(theta0, theta, R)
    assert abs(got - want) <= 1e-7 * abs(want), (got, want)
