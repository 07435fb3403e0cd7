"""Hill's infinite determinant for u'' + (theta0 + sum_{n != 0} theta_n e^{2inz}) u = 0.

Whittaker & Watson, A Course of Modern Analysis, section 19.4: with the
normalised determinant Delta(0) (row r divided by theta0 - 4 r^2), the
monodromy over one period (z: 0 -> pi) has trace

    trace = 2 - 4 Delta(0) sin^2(pi sqrt(theta0) / 2).

Rows whose divisor theta0 - 4 r^2 is small (near a resonance, or r = 0 with
theta0 near 0) are left unnormalised and their divisors paired analytically
with the sine factor, so the formula stays exact through the poles. The
truncated determinant (rows -R..R) is computed by banded elimination with
partial pivoting in O(R H^2) for H harmonics, and the rows beyond R are
added by their second-order term, which brings the truncation error from
O(R^-3) to O(R^-5) or better.
"""

from __future__ import annotations

import cmath
import math
from functools import lru_cache
from dataclasses import dataclass

SPECIAL_DIVISOR = 1.0  # rows with |theta0 - 4 r^2| below this stay unnormalised
TAIL_EXACT_ROWS = 32  # rows past the truncation summed exactly in the tail term
THIRD_ORDER_ROWS = 12  # three-cycles fall like r^-6: a dozen rows past R is enough
THIRD_ORDER_FLOOR = 1e-15  # three-cycles whose tail sum is below this are left out


@dataclass(frozen=True)
class HillTrace:
    trace: float  # of the one-period monodromy of u
    truncation: int  # rows -R..R
    error_estimate: float  # |trace(R) - trace(R - step)|, when asked for


def _special_rows(theta0: float, truncation: int) -> list[int]:
    """Rows r in -R..R with |theta0 - 4 r^2| < SPECIAL_DIVISOR, ascending. Only |r| next to
    sqrt(theta0) / 2 (or r = 0) can qualify, so those few are tried, not all 2R + 1 rows
    (a chart asks this of every Hill determinant)."""
    near = math.sqrt(theta0) / 2 if theta0 > 0 else 0.0
    if not math.isfinite(near):
        return []
    low = max(0, math.floor(near) - 1)
    found = {r for m in range(low, low + 4) for r in (-m, m)
             if m <= truncation and abs(theta0 - 4 * m * m) < SPECIAL_DIVISOR}
    if abs(theta0) < SPECIAL_DIVISOR:
        found.add(0)
    return sorted(found)


def _sine_factor(theta0: float, special: list[int]) -> float:
    """sin^2(pi sqrt(theta0)/2) / prod_{r in special} (theta0 - 4 r^2), evaluated stably."""
    if not special:
        if theta0 >= 0:
            return math.sin(math.pi * math.sqrt(theta0) / 2) ** 2
        return -math.sinh(math.pi * math.sqrt(-theta0) / 2) ** 2
    if special == [0]:
        if theta0 >= 0:
            x = math.sqrt(theta0)
            s = _sinc(math.pi * x / 2) * math.pi / 2  # sin(pi x/2)/x
            return s * s
        x = math.sqrt(-theta0)
        s = _sinhc(math.pi * x / 2) * math.pi / 2  # sinh(pi x/2)/x
        return s * s
    # special == [-r0, r0] with theta0 near 4 r0^2 > 0:
    r0 = abs(special[-1])
    x = math.sqrt(theta0)
    eps = x - 2 * r0
    # sin(pi x/2) = (-1)^r0 sin(pi eps/2); theta0 - 4 r0^2 = eps (x + 2 r0)
    s = _sinc(math.pi * eps / 2) * (math.pi / 2) / (x + 2 * r0)
    return s * s


def _sinc(x: float) -> float:
    return 1.0 - x * x / 6.0 if abs(x) < 1e-4 else math.sin(x) / x


def _sinhc(x: float) -> float:
    return 1.0 + x * x / 6.0 if abs(x) < 1e-4 else math.sinh(x) / x


def _band_determinant(theta0: float, theta: tuple, truncation: int, special: set[int]):
    """det of rows/cols -R..R: diagonal 1 (theta0 - 4r^2 if special), off-diagonal
    theta_{r-m} / (theta0 - 4r^2) (unnormalised if special)."""
    if len(theta) == 1:
        return _continuant(theta0, theta[0], truncation, special)
    h = len(theta)
    n = 2 * truncation + 1
    width = 2 * h + 1
    neg = tuple(c.conjugate() for c in theta)  # theta_{-k}
    zero = 0.0 * theta[0]

    def row(i: int) -> list:
        """Row i on columns i-h .. i+2h (the last h are room for fill-in)."""
        r = i - truncation
        div = theta0 - 4 * r * r
        out = [zero] * (width + h)
        if r in special:
            out[h] = div
            scale = 1.0
        else:
            out[h] = 1.0
            scale = 1.0 / div
        for k in range(1, h + 1):  # column r - k carries theta_k, column r + k theta_{-k}
            if i - k >= 0:
                out[h - k] = theta[k - 1] * scale
            if i + k < n:
                out[h + k] = neg[k - 1] * scale
        return out

    # Working block: rows k..k+h on columns k..k+2h. Row i enters at step i - h,
    # when its first column is k = i - h.
    window = [row(i)[h - i:] + [zero] * (h - i) for i in range(min(h, n))]
    window = [w[:width] for w in window]
    det = 1.0
    for k in range(n):
        nxt = k + h
        if nxt < n:
            window.append(row(nxt)[:width])
        best, p = abs(window[0][0]), 0
        for i in range(1, len(window)):
            v = abs(window[i][0])
            if v > best:
                best, p = v, i
        if best == 0:
            return 0.0
        if p:
            window[0], window[p] = window[p], window[0]
            det = -det
        pivot_row = window.pop(0)
        piv = pivot_row[0]
        det *= piv
        rest = pivot_row[1:]
        for i, target in enumerate(window):
            f = target[0] / piv
            if f:
                window[i] = [a - f * b for a, b in zip(target[1:], rest)] + [zero]
            else:
                window[i] = target[1:] + [zero]
    return det


def _continuant(theta0: float, c: complex, truncation: int, special: set[int]):
    """The tridiagonal case (one harmonic) by the three-term recurrence for determinants."""
    product = (c * c.conjugate()).real if isinstance(c, complex) else c * c
    f_prev, f = 1.0, 0.0
    prev_scale = None
    first = True
    for r in range(-truncation, truncation + 1):
        div = theta0 - 4 * r * r
        if r in special:
            d, scale = div, 1.0
        else:
            d, scale = 1.0, 1.0 / div
        if first:
            f_prev, f = 1.0, d
            first = False
        else:
            f_prev, f = f, d * f - product * scale * prev_scale * f_prev
        prev_scale = scale
    return f


def _tail_log_correction(theta0: float, theta: tuple, truncation: int) -> float:
    """Second-order term of the rows beyond R: -sum over index pairs not both inside."""
    total = 0.0
    last = truncation + TAIL_EXACT_ROWS
    for k, c in enumerate(theta, start=1):
        weight = abs(c) ** 2
        if weight == 0.0:
            continue
        s = 0.0
        for r in range(truncation + 1, last + 1):
            s += 1.0 / ((theta0 - 4 * r * r) * (theta0 - 4 * (r - k) ** 2))
        # The rest: with x = r - k/2 the summand is x^-4 (1 + (k^2/2 + theta0/2) x^-2)/16 + ...;
        # summed by the midpoint rule with its first Euler-Maclaurin correction.
        x = last + 0.5 - k / 2.0
        s += (1.0 / (3.0 * x ** 3) + ((k * k + theta0) / 10.0 - 1.0 / 6.0) / x ** 5) / 16.0
        total += 2.0 * weight * s  # both ends (r > R and r < -R) contribute alike
    return -total


@lru_cache(maxsize=512)
def _three_cycles(theta: tuple, truncation: int) -> tuple:
    """The three-cycles (n1, n2, weight) whose tail sum can matter at ~1e-15.

    A cycle's rows all lie past R - 2H and each divisor is at least ~4 (R - 2H)^2, so its
    tail sum is at most rows / (4 (R - 2H)^2)^3 times its weight; smaller ones are dropped.
    Depends on the harmonics only, so a scan along speed reuses it.
    """
    h = len(theta)

    def coef(n: int):
        return theta[n - 1] if n > 0 else theta[-n - 1].conjugate()

    inner = max(1, truncation - 2 * h)
    bound = (2 * (THIRD_ORDER_ROWS + 2 * h) + 1) / (4.0 * inner * inner) ** 3
    out = []
    for n1 in range(-h, h + 1):
        for n2 in range(-h, h + 1):
            n3 = -n1 - n2
            if not (n1 and n2 and n3) or abs(n3) > h:
                continue
            weight = coef(n1) * coef(n2) * coef(n3)
            if abs(weight) * bound > THIRD_ORDER_FLOOR:
                out.append((n1, n2, weight))
    return tuple(out)


def _tail_third_order(theta0: float, theta: tuple, truncation: int):
    """(1/3) tr(A^3) over three-cycles touching the rows beyond R (two or more harmonics).

    A cycle r -> r - n1 -> r - n1 - n2 -> r (n1 + n2 + n3 = 0) appears once per starting row
    in tr(A^3); the 1/3 counts it once. Cycles beyond R + THIRD_ORDER_ROWS are O(R^-5)
    smaller.
    """
    cycles = _three_cycles(tuple(theta), truncation)
    if not cycles:
        return 0.0
    h = len(theta)
    reach = truncation + THIRD_ORDER_ROWS
    base = reach + 2 * h  # inv[r + base] = 1 / (theta0 - 4 r^2)
    # Special (unnormalised) rows lie deep inside whenever R follows default_truncation;
    # should one be reached, its cycles are left out rather than divided by ~0.
    inv = [(1.0 / (theta0 - 4 * r * r) if abs(theta0 - 4 * r * r) >= SPECIAL_DIVISOR else 0.0)
           for r in range(-base, base + 1)]
    total = 0.0
    for n1, n2, weight in cycles:
        offsets = (0, -n1, -n1 - n2)
        hi_m, lo_m = max(offsets), min(offsets)
        # rows whose cycle leaves [-R, R]: r > R - hi_m, or r < -R - lo_m
        ranges = ((truncation - hi_m + 1, reach), (-reach, -truncation - lo_m - 1))
        s = 0.0
        for first, last in ranges:
            if first > last:
                continue
            a0, a1 = first + base, last + base + 1
            s += sum(x * y * z for x, y, z in zip(inv[a0:a1], inv[a0 - n1:a1 - n1],
                                                 inv[a0 - n1 - n2:a1 - n1 - n2]))
        total += weight * s
    value = total / 3.0
    return value.real if isinstance(value, complex) else value


def hill_trace(theta0: float, theta: tuple, truncation: int) -> float:
    """Trace of the one-period (pi in z) monodromy of Hill's equation.

    Parameters
    ----------
    theta0 : float
        Mean coefficient.
    theta : tuple of complex
        theta_1..theta_H (theta_{-n} is their conjugate: a real equation).
    truncation : int
        R: the determinant keeps rows -R..R; at least the number of harmonics.
    """
    if truncation < max(1, len(theta)):
        raise ValueError("truncation: must be at least the number of harmonics")
    real = all(c.imag == 0.0 for c in theta)
    coefs = tuple(c.real for c in theta) if real else tuple(complex(c) for c in theta)
    special = _special_rows(theta0, truncation)
    det = _band_determinant(theta0, coefs, truncation, set(special))
    det = det.real if isinstance(det, complex) else det
    corr = _tail_log_correction(theta0, theta, truncation)
    if len(theta) > 1:
        corr += _tail_third_order(theta0, coefs, truncation)
    try:
        value = 2.0 - 4.0 * det * math.exp(corr) * _sine_factor(theta0, special)
    except OverflowError:
        value = math.inf
    return value if math.isfinite(value) else math.copysign(math.inf, value)


def default_truncation(theta0: float, theta: tuple) -> int:
    """Rows for a trace error near 1e-11 at moderate |theta| (one harmonic, q <= 3): past the
    resonant rows, and enough for the fourth-order tail (error ~ 7.5e-3 |theta|^4 / R^7,
    measured against the Mathieu values of scipy.special in tests/test_hill.py). Larger
    |theta| and several harmonics leave more: ~1e-10 at q = 9, 2e-8 at q = 25, 1e-10 to 9e-10
    of max(1, |trace|) with two or three harmonics (tests/test_hill_parts.py), all inside the
    1e-8 a refinement must meet."""
    spread = math.sqrt(abs(theta0)) / 2.0
    size = sum(abs(c) for c in theta)
    return max(8, len(theta) + 2, math.ceil(8 + spread + 10.0 * size ** (4.0 / 7.0)))


def needed_harmonics(theta0: float, theta: tuple, truncation: int, *,
                     tol: float = 1e-12, most: int | None = None) -> int | None:
    """The fewest leading harmonics whose trace is within ``tol`` of all of them, or None
    if that takes more than ``most``.

    Higher harmonics of a crank fall geometrically and enter the determinant
    only through long cycles, so a scan can usually drop most of them.
    """
    most = len(theta) if most is None else min(most, len(theta))
    if most < len(theta):
        # Cheap first: if one harmonic past ``most`` still moves the trace, more are needed.
        over = hill_trace(theta0, theta[:most + 1], max(truncation, most + 1))
        if abs(hill_trace(theta0, theta[:most], max(truncation, most)) - over) > \
                tol * max(1.0, abs(over)):
            return None
        full = over  # the harmonics past most + 1 do not move the trace either (falling)
    else:
        full = hill_trace(theta0, theta, truncation)

    def enough(keep: int) -> bool:
        part = full if keep == len(theta) else hill_trace(theta0, theta[:keep],
                                                          max(truncation, keep))
        return abs(part - full) <= tol * max(1.0, abs(full))

    # Doubling, then bisection: a few traces instead of one per harmonic (each costs
    # rows x band^2, minutes for a crank near its dead point when taken one by one).
    hi = 1
    while hi < most and not enough(hi):
        hi = min(2 * hi, most)
    if not enough(hi):
        return None
    lo = hi // 2  # enough(lo) is False (or lo is 0)
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if enough(mid):
            hi = mid
        else:
            lo = mid
    return hi


HUGE_HALF_TRACE = 1e150  # half^2 overflows a double past 1.34e154


def multipliers_from_trace(trace: float, decay: float) -> tuple[complex, complex]:
    """Roots of rho^2 - trace rho + 1 scaled by ``decay`` (= exp(-gamma T))."""
    half = trace / 2.0
    if math.isinf(trace):
        return (complex(math.copysign(math.inf, trace)), 0j)
    if abs(half) > HUGE_HALF_TRACE:
        # half^2 would overflow: the roots are trace (1 - 1/trace^2 ...) and its reciprocal
        # (their product is 1), and 1/trace^2 < 1e-300 is nothing beside 1. Only here: below
        # it the usual formula stays, bit for bit as before.
        big, small = complex(decay * trace), complex(decay / trace)
        return (big, small) if trace > 0 else (small, big)
    root = cmath.sqrt(half * half - 1.0)
    return (decay * (half + root), decay * (half - root))
