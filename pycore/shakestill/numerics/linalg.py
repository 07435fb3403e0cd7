"""Small dense linear algebra on lists (n <= 6 here): solve, inverse, eigenvalues.

The engine runs on the standard library alone, so these few routines stand
in for numpy.linalg; the tests compare them with it.
"""

from __future__ import annotations

from .real_qr import real_eigvals as eigvals  # noqa: F401 - the engine's name for it

Matrix = list[list[float]]



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
