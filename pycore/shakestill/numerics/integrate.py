"""Adaptive DOP853 for the pendulum chain's small state, with dense output.

The Dormand-Prince 8(5,3) pair of Hairer, Norsett & Wanner (Solving Ordinary
Differential Equations I, 2nd ed., section II.10; coefficients in
``dop853_tableau``): an 8th-order step, the combined 5th/3rd-order error
estimate of their code dop853, step control after the same code, and the
7th-degree continuous extension (three extra stages, computed only when a
step's interior is asked for).

``steps`` is a generator of accepted steps, so the caller owns what happens
between them: frames, stroboscopic samples, event location (``locate``) and
restarts with another right-hand side after a switch. The state is a plain
list of floats (2 to 6 of them here), which is why this is written out for
lists instead of arrays.
"""

from __future__ import annotations

import math
from functools import lru_cache
from typing import Callable, Iterator, Sequence

from .dop853_tableau import A, B, C, D, E3, E5, N_STAGES, N_STAGES_EXTENDED
from .roots import brentq

RTOL = 1e-8  # default relative tolerance: far below what frames and events need
ATOL = 1e-8  # default absolute tolerance (radians, rad/s)
SAFETY = 0.9  # step-size safety factor (Hairer & Wanner's dop853)
MIN_FACTOR = 0.2  # the most a step may shrink after a rejection
MAX_FACTOR = 10.0  # the most a step may grow after an accepted one
ERROR_EXPONENT = -1.0 / 8.0  # -1 / (order of the error estimator + 1)
MAX_STEPS = 2_000_000  # a run needing more steps than this is reported, not continued

Rhs = Callable[[float, list], list]

# Stage rows without zeros, as (index, coefficient) pairs; the 13th row is B (the new point).
_ROWS = tuple(tuple((j, a) for j, a in A[i] if a != 0.0) for i in range(N_STAGES_EXTENDED))
_WEIGHTS = tuple((i, b) for i, b in enumerate(B) if b != 0.0)
_E5 = tuple((i, e) for i, e in enumerate(E5) if e != 0.0)
_E3 = tuple((i, e) for i, e in enumerate(E3) if e != 0.0)
_DENSE = tuple(tuple((i, d) for i, d in enumerate(row) if d != 0.0) for row in D)


class IntegrationError(RuntimeError):
    """The step size fell to round-off level or the step budget ran out."""


def _combine(y: list, h: float, K: list, row) -> list:
    """y + h * sum_j a_j K_j."""
    j, a = row[0]
    acc = [a * k for k in K[j]]
    for j, a in row[1:]:
        acc = [s + a * k for s, k in zip(acc, K[j])]
    return [yi + h * s for yi, s in zip(y, acc)]


class Step:
    """One accepted step from t0 to t1, with its 7th-degree dense output on demand."""

    __slots__ = ("t0", "t1", "y0", "y1", "f0", "f1", "_K", "_fun", "_F")

    def __init__(self, t0, t1, y0, y1, f0, f1, K, fun):
        self.t0, self.t1, self.y0, self.y1, self.f0, self.f1 = t0, t1, y0, y1, f0, f1
        self._K, self._fun, self._F = K, fun, None

    def __call__(self, t: float) -> list:
        """The state at t in [t0, t1] from the continuous extension."""
        if t == self.t1:
            return self.y1
        if t == self.t0:
            return self.y0
        F = self._F or self._dense()
        h = self.t1 - self.t0
        x = (t - self.t0) / h
        x1 = 1.0 - x
        # Horner-like nesting of Hairer's form: y0 + x(F0 + x1(F1 + x(F2 + x1(...)))).
        acc = [f * x for f in F[6]]
        for k in range(5, -1, -1):
            w = x1 if k % 2 else x
            acc = [(a + f) * w for a, f in zip(acc, F[k])]
        return [y + a for y, a in zip(self.y0, acc)]

    def _dense(self) -> list:
        self._F = _extension(len(self.y0))(self._fun, self.t0, self.t1 - self.t0, self.y0,
                                            self.y1, self.f0, self.f1, self._K)
        return self._F


def initial_step(fun: Rhs, t0: float, y0: list, f0: list, direction: float, rtol: float,
                 atol: float, order: int = 8) -> float:
    """A first step from the local scales of y and f (Hairer, Norsett & Wanner, II.4)."""
    scale = [atol + abs(y) * rtol for y in y0]
    n = len(y0)
    d0 = math.sqrt(sum((y / s) ** 2 for y, s in zip(y0, scale)) / n)
    d1 = math.sqrt(sum((f / s) ** 2 for f, s in zip(f0, scale)) / n)
    h0 = 1e-6 if d0 < 1e-5 or d1 < 1e-5 else 0.01 * d0 / d1
    y1 = [y + h0 * direction * f for y, f in zip(y0, f0)]
    f1 = fun(t0 + h0 * direction, y1)
    d2 = math.sqrt(sum(((b - a) / s) ** 2 for a, b, s in zip(f0, f1, scale)) / n) / h0
    if d1 <= 1e-15 and d2 <= 1e-15:
        h1 = max(1e-6, h0 * 1e-3)
    else:
        h1 = (0.01 / max(d1, d2)) ** (1.0 / (order + 1))
    return min(100.0 * h0, h1)


def steps(fun: Rhs, t0: float, y0: Sequence[float], t_end: float, *, rtol: float = RTOL,
          atol: float = ATOL, first_step: float | None = None, max_step: float = math.inf,
          counters: dict | None = None) -> Iterator[Step]:
    """Accepted DOP853 steps from t0 to exactly t_end (t_end > t0).

    Parameters
    ----------
    fun : callable
        ``fun(t, y) -> dy/dt`` on lists of floats.
    rtol, atol : float
        Error per step is kept below ``atol + rtol * |y|`` in the RMS norm.
    first_step : float, optional
        A step size to try first (a caller restarting after an event passes the last one).
    max_step : float
        Upper bound on the step size (seconds).
    counters : dict, optional
        Incremented in place: ``"steps"``, ``"rejected"``, ``"rhs"``.

    Raises
    ------
    ValueError
        On misuse (t_end not after t0, tolerances not positive).
    IntegrationError
        When the step size falls to round-off level (a singular right-hand side).
    """
    if not t_end > t0:
        raise ValueError(f"t_end: {t_end!r} must be later than t0 = {t0!r}")
    if not (rtol > 0 and atol > 0):
        raise ValueError(f"rtol, atol: {rtol!r}, {atol!r} must both be greater than 0")
    count = counters if counters is not None else {}
    for key in ("steps", "rejected", "rhs"):
        count.setdefault(key, 0)
    t, y = t0, list(y0)
    f = fun(t, y)
    count["rhs"] += 1
    if first_step is None:
        h = initial_step(fun, t, y, f, 1.0, rtol, atol)
        count["rhs"] += 1
    else:
        h = first_step
    h = min(h, max_step)
    rejected = False
    attempt = _stepper(len(y))
    taken = 0
    while t < t_end:
        if taken > MAX_STEPS:
            raise IntegrationError(f"more than {MAX_STEPS} steps; the motion is too stiff or "
                                   "too fast for the tolerances")
        if h < 10.0 * (math.nextafter(t, math.inf) - t):
            raise IntegrationError(f"step size fell to {h:.3g} s at t = {t:.9g} s")
        last = t + h >= t_end
        if last:
            h = t_end - t
        y_new, f_new, K, e5, e3 = attempt(fun, t, y, f, h, rtol, atol)
        count["rhs"] += N_STAGES
        # Hairer's combined estimate: err5^2 / sqrt(err5^2 + 0.01 err3^2), RMS-scaled.
        err = 0.0 if e5 == 0.0 else h * e5 / math.sqrt((e5 + 0.01 * e3) * len(y))
        if err < 1.0:
            factor = MAX_FACTOR if err == 0.0 else min(MAX_FACTOR, SAFETY * err ** ERROR_EXPONENT)
            if rejected:
                factor = min(1.0, factor)
            t_new = t_end if last else t + h
            step = Step(t, t_new, y, y_new, f, f_new, K, fun)
            t, y, f = t_new, y_new, f_new
            count["steps"] += 1
            taken += 1
            rejected = False
            h = min(h * factor, max_step)
            yield step
        else:
            h *= max(MIN_FACTOR, SAFETY * err ** ERROR_EXPONENT)
            count["rejected"] += 1
            rejected = True


@lru_cache(maxsize=None)
def _stepper(n: int):
    """One DOP853 attempt for an n-component state, written out as straight-line code.

    Pure Python pays per list operation, so the 12 stages are unrolled over the
    components once per n (2 to 6 here) from the tableau: about three times faster
    than looping over (coefficient, stage) pairs. Returns
    ``attempt(fun, t, y, f, h, rtol, atol) -> (y_new, f_new, K, err5^2, err3^2)``.
    """
    comps = range(n)

    def combo(row, i):
        return " + ".join(f"{a!r} * k{j}_{i}" for j, a in row)

    def unpack(s):
        return ", ".join(f"k{s}_{i}" for i in comps) + ("," if n == 1 else "")

    lines = ["def attempt(fun, t, y, f, h, rtol, atol):",
             f"    {', '.join(f'y_{i}' for i in comps)}{',' if n == 1 else ''} = y",
             f"    k0 = f", f"    {unpack(0)} = f"]
    for s in range(1, N_STAGES):
        state = ", ".join(f"y_{i} + h * ({combo(_ROWS[s], i)})" for i in comps)
        lines.append(f"    k{s} = fun(t + {C[s]!r} * h, [{state}])")
        lines.append(f"    {unpack(s)} = k{s}")
    lines.append("    yn = [" + ", ".join(f"y_{i} + h * ({combo(_WEIGHTS, i)})" for i in comps)
                 + "]")
    lines.append(f"    k{N_STAGES} = fun(t + h, yn)")
    lines.append(f"    {unpack(N_STAGES)} = k{N_STAGES}")
    lines.append("    e5 = e3 = 0.0")
    for i in comps:
        lines.append(f"    s = atol + rtol * max(abs(y_{i}), abs(yn[{i}]))")
        lines.append(f"    e5 += (({combo(_E5, i)}) / s) ** 2")
        lines.append(f"    e3 += (({combo(_E3, i)}) / s) ** 2")
    lines.append("    return yn, k12, [" + ", ".join(f"k{s}" for s in range(N_STAGES + 1))
                 + "], e5, e3")
    scope: dict = {}
    exec("\n".join(lines), scope)  # noqa: S102 - code built from the tableau above only
    return scope["attempt"]


@lru_cache(maxsize=None)
def _extension(n: int):
    """The three extra stages and the seven rows of the 7th-degree dense output, unrolled.

    ``extend(fun, t0, h, y0, y1, f0, f1, K) -> F`` with the interpolant
    y0 + x (F0 + (1-x) (F1 + x (F2 + ...))) of Hairer's dop853 (x = (t - t0) / h).
    """
    comps = range(n)

    def combo(row, i):
        return " + ".join(f"{a!r} * K[{j}][{i}]" for j, a in row)

    lines = ["def extend(fun, t0, h, y0, y1, f0, f1, K):"]
    for s in range(N_STAGES + 1, N_STAGES_EXTENDED):
        state = ", ".join(f"y0[{i}] + h * ({combo(_ROWS[s], i)})" for i in comps)
        lines.append(f"    K.append(fun(t0 + {C[s]!r} * h, [{state}]))")
    lines.append("    dy = [b - a for a, b in zip(y0, y1)]")
    lines.append("    F = [dy, [h * f - d for f, d in zip(f0, dy)],"
                 " [2.0 * d - h * (b + a) for d, a, b in zip(dy, f0, f1)]]")
    for row in _DENSE:
        lines.append("    F.append([" + ", ".join(f"h * ({combo(row, i)})" for i in comps) + "])")
    lines.append("    return F")
    scope: dict = {}
    exec("\n".join(lines), scope)  # noqa: S102 - code built from the tableau above only
    return scope["extend"]


def locate(g: Callable[[float], float], t0: float, t1: float, g0: float, g1: float, *,
           xtol: float = 1e-12) -> float:
    """The time in [t0, t1] where g changes sign, g usually built on ``Step.__call__``."""
    return brentq(g, t0, t1, fa=g0, fb=g1, xtol=xtol)
