"""Taylor-series cycle of the linearised chain in its sway-mode coordinates.

With q = X z (X^T M X = I, X^T K X = diag(kappa)) the chain's M q'' + D q' + G(t) K q = 0
becomes z'' + Dm z' + G(t) diag(kappa) z = 0, Dm = X^T D X. Over a step of length h the
solution is its Taylor series, and for a linear equation the coefficients follow from the
recurrence (the Taylor series method: Barton, Willers & Zahar, Comput. J. 14 (1971) 243;
Jorba & Zou, Experiment. Math. 14 (2005) 99)

    (n + 1)(n + 2) Z_{n+2} = -kappa * sum_{j<=n} g_j Z_{n-j} - (n + 1) h Dm Z_{n+1},

with Z_n = z^(n)(t0) h^n / n! and g_j = G^(j)(t0) h^(j+2) / j!: the drive's own series,
scaled the same way. ORDER terms a step: the truncation error of a step is about
(rate h)^(ORDER+1) / (ORDER+1)! for the chain's fastest rate, and the drive's series must
converge over the step too (equilibria/cycle.py's chain_steps chooses the steps for both).
Against the DOP853 cycle it replaced, at the chart's accuracy: 7-10 steps a cycle where
DOP853 took 12-17 on a sine drive, about as many on a crank, each step cheaper (diagonal
stiffness, no stages); three-link charts 1.6-1.9x faster (measured 2026-12-05).
"""

from __future__ import annotations

from functools import lru_cache
from typing import Sequence

ORDER = 12  # Taylor terms a step (the drive's series has ORDER - 1 of them)


def modal_cycle(kappa: Sequence[float], damping: Sequence[Sequence[float]],
                drive: Sequence[float], g_h2: float, h: float, steps: int) -> list[list[float]]:
    """The fundamental matrix of z'' + Dm z' + G(t) diag(kappa) z = 0 over ``steps`` steps
    of length ``h``, for the state (z, z').

    ``drive`` holds the drive's scaled series g_j (without g) for j < ORDER - 1 at the start
    of every step, step-major; ``g_h2`` is g h^2, added to g_0.
    """
    n = len(kappa)
    damped = any(x != 0.0 for row in damping for x in row)
    run = _column_propagator(n, damped)
    coefficients = [float(k) for k in kappa]
    if damped:
        coefficients += [h * float(x) for row in damping for x in row]
    columns = [run([1.0 if i == j else 0.0 for i in range(2 * n)], drive, g_h2, h, steps,
                   *coefficients) for j in range(2 * n)]
    return [[columns[j][i] for j in range(2 * n)] for i in range(2 * n)]


@lru_cache(maxsize=None)
def _column_propagator(n: int, damped: bool):
    """One column over all steps as straight-line code, once per (n, damped): pure Python
    pays per list operation and loop turn, so every coefficient is a scalar local.
    Returns ``run(y, drive, g_h2, h, steps, k0, ..., [hd00, ...]) -> y_end``."""
    idx = range(n)
    terms = ORDER - 1
    kappa = [f"k{i}" for i in idx]
    damping = [f"d{i}{j}" for i in idx for j in idx] if damped else []
    state = [f"q{i}" for i in idx] + [f"v{i}" for i in idx]
    lines = [f"def run(y, drive, g_h2, h, steps, {', '.join(kappa + damping)}):",
             f"    {', '.join(state)}, = y",
             f"    for base in range(0, {terms} * steps, {terms}):",
             "        g0 = g_h2 + drive[base]"]
    put = lines.append
    for j in range(1, terms):
        put(f"        g{j} = drive[base + {j}]")
    for i in idx:
        put(f"        Z0_{i} = q{i}")
        put(f"        Z1_{i} = h * v{i}")
    for m in range(terms):  # Z_{m+2} from Z_0 .. Z_{m+1}
        for i in idx:
            product = " + ".join(f"g{j} * Z{m - j}_{i}" for j in range(m + 1))
            line = f"        Z{m + 2}_{i} = -(k{i} * ({product}) * {1.0 / ((m + 1) * (m + 2))!r}"
            if damped:
                line += (" + (" + " + ".join(f"d{i}{j} * Z{m + 1}_{j}" for j in idx) +
                         f") * {1.0 / (m + 2)!r}")
            put(line + ")")
    for i in idx:
        put(f"        q{i} = " + " + ".join(f"Z{k}_{i}" for k in range(ORDER + 1)))
        put(f"        v{i} = (" + " + ".join(f"{float(k)!r} * Z{k}_{i}"
                                              for k in range(1, ORDER + 1)) + ") / h")
    lines.append(f"    return [{', '.join(state)}]")
    scope: dict = {}
    exec("\n".join(lines), scope)  # noqa: S102 - code built from the recurrence above only
    return scope["run"]
