"""Fixed-step Runge-Kutta for the linearised chain's fundamental matrix.

x' = A(t) x with x = (q, q') and A(t) = [[0, I], [-G(t) B, -C]], B = M^-1 K,
C = M^-1 D, G(t) = g + y_p''(t). One cycle of the 2N x 2N fundamental matrix
is the monodromy matrix. The step is DOP853's 8th-order formula (Hairer,
Norsett & Wanner), used at a fixed step because the cycle is short and
smooth and the stage times then never change between evaluations.
"""

from __future__ import annotations

from typing import Sequence

from .dop853_tableau import A as _A
from .dop853_tableau import B as _B
from .dop853_tableau import C as _C
from .dop853_tableau import N_STAGES

STAGE_NODES = _C[:N_STAGES]  # stage times as fractions of a step


def fundamental_matrix(B: Sequence[Sequence[float]], C: Sequence[Sequence[float]],
                       G_nodes: Sequence[float], period: float, steps: int) -> list[list[float]]:
    """Propagate the identity over one period.

    Parameters
    ----------
    B, C : N x N
        M^-1 K and M^-1 D.
    G_nodes : sequence of float
        G at every stage time, ``steps * 12`` values, step-major
        (``G_nodes[s * 12 + i]`` at t = (s + c_i) h).
    period : float
        Seconds.
    steps : int
        Equal steps over the period.
    """
    n = len(B)
    size = 2 * n
    h = period / steps
    # The state is the whole matrix, flattened row by row: rows 0..n-1 hold q, rows
    # n..2n-1 hold q' (each row across the 2n columns), so one list operation does all.
    X = [1.0 if i == j else 0.0 for i in range(size) for j in range(size)]
    damped = any(x != 0.0 for row in C for x in row)
    B_rows = [[(j, float(b)) for j, b in enumerate(row) if b != 0.0] for row in B]
    C_rows = [[(j, float(c)) for j, c in enumerate(row) if c != 0.0] for row in C]
    weights = [(i, b * h) for i, b in enumerate(_B) if b != 0.0]
    stage_rows = [[(j, a * h) for j, a in _A[i]] for i in range(N_STAGES)]
    half = n * size  # where the q' rows start
    zero = [0.0] * size
    for s in range(steps):
        base = s * N_STAGES
        k = []
        for i in range(N_STAGES):
            y = X
            for j, ah in stage_rows[i]:
                y = [a + ah * b for a, b in zip(y, k[j])]
            g = G_nodes[base + i]
            deriv = y[half:]  # dq/dt = q'
            for row in range(n):
                acc = zero
                for j, b in B_rows[row]:
                    coef = -g * b
                    qj = y[j * size:(j + 1) * size]
                    acc = [a + coef * q for a, q in zip(acc, qj)]
                if damped:
                    for j, c in C_rows[row]:
                        vj = y[half + j * size:half + (j + 1) * size]
                        acc = [a - c * v for a, v in zip(acc, vj)]
                deriv += acc
            k.append(deriv)
        for i, bh in weights:
            X = [a + bh * b for a, b in zip(X, k[i])]
    return [X[i * size:(i + 1) * size] for i in range(size)]
