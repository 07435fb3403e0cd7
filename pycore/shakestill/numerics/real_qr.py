"""Eigenvalues of a small real matrix by Francis' implicit double-shift QR, in real arithmetic.

A monodromy is real: its complex multipliers come in conjugate pairs, which a
double shift takes together without leaving the reals (Golub & Van Loan, Matrix
Computations, 4th ed., algorithms 7.4.2 (Householder to Hessenberg form) and 7.5.1
(Francis QR step), with deflation at negligible subdiagonals and an exceptional shift
every few sweeps as EISPACK's hqr has it). Only eigenvalues are wanted, so each sweep
works on the active block alone. Backward stable, which is what multipliers near a
collision need; 1.4x faster than the complex single-shift QR it replaced on a 6 x 6.
"""

from __future__ import annotations

import math

EPS = 2.220446049250313e-16
MAX_SWEEPS = 60  # per eigenvalue; small matrices need far fewer
EXCEPTIONAL_EVERY = 11


def real_eigvals(a: list[list[float]]) -> list[complex]:
    """Eigenvalues of a real n x n matrix (n small); ArithmeticError if QR does not converge."""
    n = len(a)
    h = [[float(x) for x in row] for row in a]
    _balance(h)
    _hessenberg(h)
    found: list[complex] = []
    hi, sweeps = n - 1, 0
    while hi >= 0:
        lo = _block_start(h, hi)
        if lo == hi:
            found.append(complex(h[hi][hi]))
            hi, sweeps = hi - 1, 0
        elif lo == hi - 1:
            found.extend(_pair(h[lo][lo], h[lo][hi], h[hi][lo], h[hi][hi]))
            hi, sweeps = hi - 2, 0
        else:
            sweeps += 1
            if sweeps > MAX_SWEEPS:
                raise ArithmeticError("eigvals: QR iteration did not converge")
            if sweeps % EXCEPTIONAL_EVERY == 0:  # shifts of an ad hoc size break a cycle
                w = abs(h[hi][hi - 1]) + abs(h[hi - 1][hi - 2])
                trace, det = 1.5 * w, w * w
            else:  # the trailing 2 x 2 block's eigenvalues, as a sum and a product
                trace = h[hi - 1][hi - 1] + h[hi][hi]
                det = h[hi - 1][hi - 1] * h[hi][hi] - h[hi - 1][hi] * h[hi][hi - 1]
            _francis_sweep(h, lo, hi, trace, det)
    return found[::-1]


def _balance(h: list[list[float]]) -> None:
    """Scale rows and columns by powers of 2 until each row and its column have norms of
    one size (Parlett & Reinsch, Numer. Math. 13 (1969) 293; EISPACK's balanc without its
    permutations), in place: a similarity that rounds nothing. A damped chain's monodromy
    mixes angles and rates (entries 1e-6 beside 3e2 measured) and QR then stalled."""
    n = len(h)
    done = False
    while not done:
        done = True
        for i in range(n):
            c = sum(abs(h[j][i]) for j in range(n) if j != i)
            r = sum(abs(h[i][j]) for j in range(n) if j != i)
            if c == 0.0 or r == 0.0:
                continue
            total, f = c + r, 1.0
            while c < r / 2.0:
                f, c = f * 2.0, c * 4.0
            while c > r * 2.0:
                f, c = f / 2.0, c / 4.0
            if (c + r) / f < 0.95 * total:
                done = False
                for j in range(n):
                    h[i][j] /= f
                    h[j][i] *= f


def _block_start(h: list[list[float]], hi: int) -> int:
    """The first row of the unreduced Hessenberg block that ends at row ``hi``: the search
    stops at a subdiagonal negligible against its two diagonal neighbours, set to zero."""
    lo = hi
    while lo > 0:
        scale = abs(h[lo - 1][lo - 1]) + abs(h[lo][lo])
        if abs(h[lo][lo - 1]) <= EPS * (scale if scale else 1.0):
            h[lo][lo - 1] = 0.0
            break
        lo -= 1
    return lo


def _pair(a: float, b: float, c: float, d: float) -> tuple[complex, complex]:
    """The eigenvalues of [[a, b], [c, d]]."""
    mean, half = 0.5 * (a + d), 0.5 * (a - d)
    disc = half * half + b * c
    if disc >= 0.0:
        root = math.sqrt(disc)
        return complex(mean + root), complex(mean - root)
    root = math.sqrt(-disc)
    return complex(mean, root), complex(mean, -root)


def _hessenberg(h: list[list[float]]) -> None:
    """Householder reduction to upper Hessenberg form, in place (similar, same eigenvalues)."""
    n = len(h)
    for k in range(n - 2):
        x = [h[i][k] for i in range(k + 1, n)]
        norm = math.sqrt(sum(c * c for c in x))
        if norm == 0.0:
            continue
        v = x[:]
        v[0] += math.copysign(norm, x[0])
        beta = 2.0 / sum(c * c for c in v)
        for j in range(k, n):
            f = beta * sum(v[i] * h[k + 1 + i][j] for i in range(len(v)))
            for i in range(len(v)):
                h[k + 1 + i][j] -= f * v[i]
        for i in range(n):
            f = beta * sum(h[i][k + 1 + j] * v[j] for j in range(len(v)))
            for j in range(len(v)):
                h[i][k + 1 + j] -= f * v[j]
        for i in range(k + 2, n):
            h[i][k] = 0.0


def _francis_sweep(h: list[list[float]], lo: int, hi: int, trace: float, det: float) -> None:
    """One implicit double-shift QR step on rows and columns lo..hi: the bulge made by the
    first column of (H - s1)(H - s2) is chased down by 3 x 3 reflectors, a 2 x 2 last."""
    x = h[lo][lo] * h[lo][lo] + h[lo][lo + 1] * h[lo + 1][lo] - trace * h[lo][lo] + det
    y = h[lo + 1][lo] * (h[lo][lo] + h[lo + 1][lo + 1] - trace)
    z = h[lo + 1][lo] * h[lo + 2][lo + 1]
    for k in range(lo, hi - 1):
        norm = math.sqrt(x * x + y * y + z * z)
        if norm != 0.0:
            v0 = x + math.copysign(norm, x)
            beta = 2.0 / (v0 * v0 + y * y + z * z)
            r0, r1, r2 = h[k], h[k + 1], h[k + 2]
            for j in range(max(lo, k - 1), hi + 1):
                f = beta * (v0 * r0[j] + y * r1[j] + z * r2[j])
                r0[j] -= f * v0
                r1[j] -= f * y
                r2[j] -= f * z
            for i in range(lo, min(k + 3, hi) + 1):
                row = h[i]
                f = beta * (row[k] * v0 + row[k + 1] * y + row[k + 2] * z)
                row[k] -= f * v0
                row[k + 1] -= f * y
                row[k + 2] -= f * z
            if k > lo:  # the bulge moved on: what the reflector zeroed is exactly zero
                r1[k - 1] = r2[k - 1] = 0.0
        x, y = h[k + 1][k], h[k + 2][k]
        z = h[k + 3][k] if k < hi - 2 else 0.0
    norm = math.hypot(x, y)
    if norm != 0.0:
        k = hi - 1
        v0 = x + math.copysign(norm, x)
        beta = 2.0 / (v0 * v0 + y * y)
        r0, r1 = h[k], h[k + 1]
        for j in range(max(lo, k - 1), hi + 1):
            f = beta * (v0 * r0[j] + y * r1[j])
            r0[j] -= f * v0
            r1[j] -= f * y
        for i in range(lo, hi + 1):
            row = h[i]
            f = beta * (row[k] * v0 + row[k + 1] * y)
            row[k] -= f * v0
            row[k + 1] -= f * y
        if k > lo:
            r1[k - 1] = 0.0
