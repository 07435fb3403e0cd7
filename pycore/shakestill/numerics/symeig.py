"""The symmetric-definite generalised eigenproblem A x = lambda B x for small matrices.

B = L L^T (Cholesky), C = L^-1 A L^-T is symmetric, its eigenpairs by the cyclic
Jacobi method (Golub & Van Loan, Matrix Computations, 4th ed., sections 4.2 and
8.5.2), then x = L^-T y. Eigenvectors come out B-orthonormal: X^T B X = I and
X^T A X = diag(lambda). Standard library only; n <= 3 here.
"""

from __future__ import annotations

import math

JACOBI_SWEEPS = 50  # cyclic sweeps at most; a 3 x 3 needs about 5 to reach round-off
OFF_TOLERANCE = 1e-30  # off-diagonal square sum, relative to the whole, that counts as zero


def cholesky(b: list[list[float]]) -> list[list[float]]:
    """Lower-triangular L with L L^T = b; ValueError when b is not positive definite."""
    n = len(b)
    low = [[0.0] * n for _ in range(n)]
    for i in range(n):
        for j in range(i + 1):
            s = b[i][j] - sum(low[i][k] * low[j][k] for k in range(j))
            if i == j:
                if not s > 0.0:
                    raise ValueError("matrix: not positive definite")
                low[i][i] = math.sqrt(s)
            else:
                low[i][j] = s / low[j][j]
    return low


def _lower_inverse(low: list[list[float]]) -> list[list[float]]:
    n = len(low)
    inv = [[0.0] * n for _ in range(n)]
    for i in range(n):
        inv[i][i] = 1.0 / low[i][i]
        for j in range(i):
            inv[i][j] = -sum(low[i][k] * inv[k][j] for k in range(j, i)) / low[i][i]
    return inv


def jacobi_eigen(c: list[list[float]]) -> tuple[list[float], list[list[float]]]:
    """Eigenvalues and eigenvectors (as columns of V) of a symmetric matrix, C V = V diag."""
    n = len(c)
    a = [list(map(float, row)) for row in c]
    v = [[1.0 if i == j else 0.0 for j in range(n)] for i in range(n)]
    scale = sum(x * x for row in a for x in row) or 1.0
    for _ in range(JACOBI_SWEEPS):
        off = sum(a[i][j] ** 2 for i in range(n) for j in range(n) if i != j)
        if off <= OFF_TOLERANCE * scale:
            break
        for p in range(n - 1):
            for q in range(p + 1, n):
                if a[p][q] == 0.0:
                    continue
                # the rotation that zeroes a[p][q] (Golub & Van Loan, algorithm 8.5.1)
                tau = (a[q][q] - a[p][p]) / (2.0 * a[p][q])
                t = math.copysign(1.0, tau) / (abs(tau) + math.sqrt(1.0 + tau * tau))
                cs = 1.0 / math.sqrt(1.0 + t * t)
                sn = t * cs
                for k in range(n):
                    akp, akq = a[k][p], a[k][q]
                    a[k][p], a[k][q] = cs * akp - sn * akq, sn * akp + cs * akq
                for k in range(n):
                    apk, aqk = a[p][k], a[q][k]
                    a[p][k], a[q][k] = cs * apk - sn * aqk, sn * apk + cs * aqk
                for k in range(n):
                    vkp, vkq = v[k][p], v[k][q]
                    v[k][p], v[k][q] = cs * vkp - sn * vkq, sn * vkp + cs * vkq
    return [a[i][i] for i in range(n)], v


def generalized_eigh(a: list[list[float]], b: list[list[float]]):
    """(lambdas ascending, X with the eigenvectors as columns) of A x = lambda B x,
    A symmetric and B symmetric positive definite; X^T B X = I."""
    n = len(a)
    linv = _lower_inverse(cholesky(b))
    # C = L^-1 A L^-T
    la = [[sum(linv[i][k] * a[k][j] for k in range(n)) for j in range(n)] for i in range(n)]
    c = [[sum(la[i][k] * linv[j][k] for k in range(n)) for j in range(n)] for i in range(n)]
    c = [[(c[i][j] + c[j][i]) / 2.0 for j in range(n)] for i in range(n)]
    lams, y = jacobi_eigen(c)
    order = sorted(range(n), key=lambda k: lams[k])
    # x = L^-T y
    x = [[sum(linv[k][i] * y[k][col] for k in range(n)) for col in order] for i in range(n)]
    return [lams[k] for k in order], x
