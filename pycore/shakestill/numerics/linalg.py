"""Small dense linear algebra on lists (n <= 6 here): solve, inverse, eigenvalues.

The engine runs on the standard library alone, so these few routines stand
in for numpy.linalg; the tests compare them with it.
"""

from __future__ import annotations

import cmath
import math

Matrix = list[list[float]]

_EPS = 2.220446049250313e-16  # double precision unit roundoff * 2
_MAX_QR_SWEEPS = 60  # per eigenvalue; small matrices need far fewer
_EXCEPTIONAL_EVERY = 11  # an ad hoc shift breaks rare QR cycles (as LAPACK does)


def matmul(a: Matrix, b: Matrix) -> Matrix:
    bt = list(zip(*b))
    return [[sum(x * y for x, y in zip(row, col)) for col in bt] for row in a]


def identity(n: int) -> Matrix:
    return [[1.0 if i == j else 0.0 for j in range(n)] for i in range(n)]


def inverse(a: Matrix) -> Matrix:
    """Gauss-Jordan with partial pivoting; raises ValueError if singular."""
    n = len(a)
    m = [list(map(float, row)) + e for row, e in zip(a, identity(n))]
    for col in range(n):
        piv = max(range(col, n), key=lambda r: abs(m[r][col]))
        if m[piv][col] == 0.0:
            raise ValueError("matrix: singular")
        m[col], m[piv] = m[piv], m[col]
        p = m[col][col]
        m[col] = [x / p for x in m[col]]
        for r in range(n):
            if r != col and m[r][col] != 0.0:
                f = m[r][col]
                m[r] = [x - f * y for x, y in zip(m[r], m[col])]
    return [row[n:] for row in m]


def solve(a: Matrix, b: list[float]) -> list[float]:
    inv = inverse(a)
    return [sum(x * y for x, y in zip(row, b)) for row in inv]


def det(a: Matrix) -> float:
    """Determinant by elimination with partial pivoting."""
    n = len(a)
    m = [list(map(float, row)) for row in a]
    d = 1.0
    for col in range(n):
        piv = max(range(col, n), key=lambda r: abs(m[r][col]))
        if m[piv][col] == 0.0:
            return 0.0
        if piv != col:
            m[col], m[piv] = m[piv], m[col]
            d = -d
        p = m[col][col]
        d *= p
        for r in range(col + 1, n):
            f = m[r][col] / p
            if f:
                m[r] = [x - f * y for x, y in zip(m[r], m[col])]
    return d


def _hessenberg(h: list[list[complex]]) -> None:
    """Householder reduction to upper Hessenberg form, in place."""
    n = len(h)
    for k in range(n - 2):
        x = [h[i][k] for i in range(k + 1, n)]
        alpha = math.sqrt(sum(abs(c) ** 2 for c in x))
        if alpha == 0.0:
            continue
        phase = x[0] / abs(x[0]) if x[0] != 0 else 1.0
        v = x[:]
        v[0] += phase * alpha
        vn2 = sum(abs(c) ** 2 for c in v)
        for j in range(n):
            f = 2.0 * sum(v[i].conjugate() * h[k + 1 + i][j] for i in range(len(v))) / vn2
            for i in range(len(v)):
                h[k + 1 + i][j] -= f * v[i]
        for i in range(n):
            f = 2.0 * sum(h[i][k + 1 + j] * v[j] for j in range(len(v))) / vn2
            for j in range(len(v)):
                h[i][k + 1 + j] -= f * v[j].conjugate()


def eigvals(a: Matrix) -> list[complex]:
    """Eigenvalues of a small real or complex matrix.

    Householder reduction to Hessenberg form, then single-shift complex QR
    with Wilkinson shifts and deflation (Golub & Van Loan, Matrix
    Computations, ch. 7). Backward stable, which is what multipliers near a
    collision need.
    """
    n = len(a)
    h = [[complex(x) for x in row] for row in a]
    _hessenberg(h)
    found: list[complex] = []
    hi, sweeps = n - 1, 0
    while hi >= 0:
        low = hi
        while low > 0:
            scale = abs(h[low - 1][low - 1]) + abs(h[low][low])
            if abs(h[low][low - 1]) <= _EPS * (scale if scale else 1.0):
                h[low][low - 1] = 0j
                break
            low -= 1
        if low == hi:
            found.append(h[hi][hi])
            hi, sweeps = hi - 1, 0
            continue
        sweeps += 1
        if sweeps > _MAX_QR_SWEEPS:
            raise ArithmeticError("eigvals: QR iteration did not converge")
        mu = _wilkinson_shift(h, hi)
        if sweeps % _EXCEPTIONAL_EVERY == 0:
            mu = h[hi][hi] + abs(h[hi][hi - 1])
        _qr_sweep(h, low, hi, mu)
    return found[::-1]


def _wilkinson_shift(h, hi: int) -> complex:
    a, b, c, d = h[hi - 1][hi - 1], h[hi - 1][hi], h[hi][hi - 1], h[hi][hi]
    half = (a + d) / 2
    disc = cmath.sqrt(half * half - (a * d - b * c))
    mu1, mu2 = half + disc, half - disc
    return mu1 if abs(mu1 - d) < abs(mu2 - d) else mu2


def _qr_sweep(h, low: int, hi: int, mu: complex) -> None:
    """One shifted QR step H - mu I = QR, H <- RQ + mu I on rows/cols low..hi."""
    for i in range(low, hi + 1):
        h[i][i] -= mu
    rotations = []
    for k in range(low, hi):
        x, y = h[k][k], h[k + 1][k]
        r = math.hypot(abs(x), abs(y))
        c, s = (x / r, y / r) if r else (1.0 + 0j, 0j)
        cc, sc = c.conjugate(), s.conjugate()
        row_k, row_k1 = h[k], h[k + 1]
        for j in range(k, hi + 1):
            t1, t2 = row_k[j], row_k1[j]
            row_k[j] = cc * t1 + sc * t2
            row_k1[j] = -s * t1 + c * t2
        rotations.append((k, c, s))
    for k, c, s in rotations:
        cc, sc = c.conjugate(), s.conjugate()
        for i in range(low, min(k + 2, hi) + 1):
            t1, t2 = h[i][k], h[i][k + 1]
            h[i][k] = t1 * c + t2 * s
            h[i][k + 1] = -t1 * sc + t2 * cc
    for i in range(low, hi + 1):
        h[i][i] += mu
