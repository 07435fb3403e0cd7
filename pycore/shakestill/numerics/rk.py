"""Fixed-step Runge-Kutta for the linearised chain's fundamental matrix.

x' = A(t) x with x = (q, q') and A(t) = [[0, I], [-G(t) B, -C]], B = M^-1 K,
C = M^-1 D, G(t) = g + y_p''(t), over a speed ramp: the run-up's transfer matrix
(one drive cycle's monodromy is the Taylor cycle of numerics/taylor.py). The step is
DOP853's 8th-order formula (Hairer, Norsett & Wanner), used at a fixed step because
the stage times then never change between evaluations; ``fixed_steps`` serves the
held orbit's shooting.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Sequence

from .dop853_tableau import A as _A
from .dop853_tableau import B as _B
from .dop853_tableau import C as _C
from .dop853_tableau import N_STAGES

STAGE_NODES = _C[:N_STAGES]  # stage times as fractions of a step
_WEIGHTS = tuple((i, b) for i, b in enumerate(_B) if b != 0.0)
_STAGE_ROWS = tuple(tuple((j, a) for j, a in _A[i] if a != 0.0) for i in range(N_STAGES))


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
    damped = any(x != 0.0 for row in C for x in row)
    run = _column_propagator(n, damped)
    coefficients = [float(x) for row in B for x in row]
    if damped:
        coefficients += [float(x) for row in C for x in row]
    h = period / steps
    columns = [run([1.0 if i == j else 0.0 for i in range(size)], G_nodes, h, steps,
                   *coefficients) for j in range(size)]
    return [[columns[j][i] for j in range(size)] for i in range(size)]


@lru_cache(maxsize=None)
def _column_propagator(n: int, damped: bool):
    """One column of the fundamental matrix over all steps, written out as straight-line code.

    Pure Python pays per list operation and per loop turn, so the 12 stages of a step
    are unrolled over the 2n components into scalar locals, once per (n, damped): about
    five times faster than combining lists. The velocity part of each stage derivative
    is the stage's own velocity, so only the accelerations are computed.
    Returns ``run(y, G, h, steps, b00, b01, ..., [c00, ...]) -> y_end``.
    """
    idx = range(n)
    b = [f"b{i}{j}" for i in idx for j in idx]
    c = [f"c{i}{j}" for i in idx for j in idx] if damped else []

    def accel(s, i, q, v):
        # dv_i/dt = -G sum_j b_ij q_j - sum_j c_ij v_j at stage s
        term = f"-g{s} * (" + " + ".join(f"b{i}{j} * {q}{j}" for j in idx) + ")"
        if damped:
            term += " - (" + " + ".join(f"c{i}{j} * {v}{j}" for j in idx) + ")"
        return term

    def combo(row, kind, i):
        return " + ".join(f"{a!r} * k{kind}{j}_{i}" for j, a in row)

    lines = [f"def run(y, G, h, steps, {', '.join(b + c)}):",
             f"    {', '.join([f'q{i}' for i in idx] + [f'v{i}' for i in idx])}, = y",
             f"    for base in range(0, {N_STAGES} * steps, {N_STAGES}):"]
    put = lines.append
    for s in range(N_STAGES):
        put(f"        g{s} = G[base + {s}]")
        row = tuple((j, a) for j, a in _A[s] if a != 0.0)
        if s == 0:
            for i in idx:
                put(f"        kq0_{i} = v{i}")
            for i in idx:
                put(f"        kv0_{i} = {accel(0, i, 'q', 'v')}")
            continue
        for i in idx:
            put(f"        Q{i} = q{i} + h * ({combo(row, 'q', i)})")
            put(f"        kq{s}_{i} = v{i} + h * ({combo(row, 'v', i)})")
        for i in idx:
            put(f"        kv{s}_{i} = {accel(s, i, 'Q', f'kq{s}_')}")
    for i in idx:
        put(f"        q{i} += h * ({combo(_WEIGHTS, 'q', i)})")
        put(f"        v{i} += h * ({combo(_WEIGHTS, 'v', i)})")
    lines.append(f"    return [{', '.join([f'q{i}' for i in idx] + [f'v{i}' for i in idx])}]")
    scope: dict = {}
    exec("\n".join(lines), scope)  # noqa: S102 - code built from the tableau above only
    return scope["run"]


def fixed_steps(fun, t0: float, y0: Sequence, period: float, steps: int) -> list[list]:
    """States at the ends of ``steps`` equal DOP853 steps over ``period`` (y0 first).

    ``fun(t, y)`` may work on complex states (a complex-step derivative): nothing here
    takes an absolute value.
    """
    h = period / steps
    rows = _STAGE_ROWS
    y = list(y0)
    out = [y]
    for k in range(steps):
        t = t0 + k * h
        K = []
        for i in range(N_STAGES):
            yi = y
            for j, a in rows[i]:
                yi = [u + h * a * v for u, v in zip(yi, K[j])]
            K.append(fun(t + _C[i] * h, yi))
        for i, b in _WEIGHTS:
            y = [u + h * b * v for u, v in zip(y, K[i])]
        out.append(y)
    return out
