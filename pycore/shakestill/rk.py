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
    # X is stored by columns: X[col] = [q_0..q_{n-1}, v_0..v_{n-1}]
    X = [[1.0 if i == col else 0.0 for i in range(size)] for col in range(size)]
    Bf = [list(map(float, row)) for row in B]
    Cf = [list(map(float, row)) for row in C]
    damped = any(x != 0.0 for row in Cf for x in row)
    weights = [(i, b * h) for i, b in enumerate(_B) if b != 0.0]
    stage_rows = [[(j, a * h) for j, a in _A[i]] for i in range(N_STAGES)]
    for s in range(steps):
        base = s * N_STAGES
        new_X = []
        for x in X:
            k = []
            for i in range(N_STAGES):
                y = list(x)
                for j, ah in stage_rows[i]:
                    kj = k[j]
                    y = [a + ah * b for a, b in zip(y, kj)]
                q, v = y[:n], y[n:]
                g = G_nodes[base + i]
                acc = [-g * sum(br * qq for br, qq in zip(brow, q)) for brow in Bf]
                if damped:
                    acc = [a - sum(cr * vv for cr, vv in zip(crow, v)) for a, crow in zip(acc, Cf)]
                k.append(v + acc)
            out = list(x)
            for i, bh in weights:
                out = [a + bh * b for a, b in zip(out, k[i])]
            new_X.append(out)
        X = new_X
    # return row-major: M[i][col]
    return [[X[col][i] for col in range(size)] for i in range(size)]
