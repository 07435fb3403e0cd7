"""Closing a bracket [good, bad] on a parameter where the held orbit stops holding, with
few orbit solves.

A bisection to 1e-4 needs 8 or more full Newton shootings. Each solve already yields a
smooth indicator of how near the end is, so the end is aimed at instead:

- the orbit still exists on the bad side ("unstable", or the lean past its limit): the
  indicator (1 - largest |multiplier| with damping, or the lean margin) changes sign
  smoothly across the end, and regula falsi on it converges superlinearly;
- the orbit is lost on the bad side (a fold: it merges with an unstable twin and
  vanishes): there a multiplier reaches +1, so det(I - M) = prod (1 - multiplier) is 0.
  Along the branch det(I - M) is linear in the state and the branch is a parabola
  in the state about the fold, so p = p* + c m^2 with m = |det(I - M)|, and two good
  points fix the fold by extrapolating to m = 0 (three, with the m^3 term, better) (a lightly damped link's complex pair
  near 1 would mislead a plain min |1 - multiplier|: its square root is what is linear);
- without damping the multipliers stay on the unit circle until two collide (at -1 or a
  Krein collision) and 1 - |multiplier| is 0 on the good side; there the smallest
  distance between two multipliers goes as the square root of the distance to the end.

The aimed point is tested just inside and just outside (a half-tolerance each way), so
a good aim closes the bracket in two solves. Whenever the aim falls outside the bracket
or a round shrinks it by less than half, the next round bisects: never worse than
bisection, and the end is always a bracket to the asked precision, not a model's guess.
"""

from __future__ import annotations

from typing import Callable, NamedTuple

from ..numerics.linalg import solve

AIM_MARGIN = 0.45  # of the tolerance: the inside and outside tests around an aimed end
SLOW_ROUND = 0.6  # a round that leaves more of the bracket than this is followed by a bisection


class Point(NamedTuple):
    at: float
    ok: bool
    kind: str  # "held", or why not: "unstable" | "lost" | "lean"
    value: float | None  # the indicator: positive while held, None when lost
    fold: float | None  # held points: |det(I - M)|, the square-law distance to a fold
    pair: float | None  # held points: the smallest distance between two multipliers
    state: object  # the solver's own result (orbit), handed back for the good end


Probe = Callable[[float, object], Point]  # (parameter, Newton start from the nearest good)


def _aim(goods: list[Point], bad: Point) -> float | None:
    """The model's end between the last good points and the bad one (module docstring)."""
    g = goods[-1]
    if bad.value is not None and g.value is not None and g.value != bad.value:
        return g.at + g.value * (bad.at - g.at) / (g.value - bad.value)
    ms = [g.fold if bad.kind == "lost" else g.pair for g in goods[-3:]]
    if len(ms) < 2 or any(m is None for m in ms):
        return None
    # p = p* + c2 m^2 (+ c3 m^3 with three points: the next term of the expansion)
    rows = [[1.0, m * m, m ** 3][:len(ms)] for m in ms]
    try:
        return solve(rows, [g.at for g in goods[-len(ms):]])[0]
    except (ZeroDivisionError, ValueError, ArithmeticError):
        return None


def close(good: Point, bad: Point, probe: Probe, start_of: Callable[[Point], object], *,
          rtol: float = 0.0, atol: float = 0.0) -> tuple[Point, Point, int]:
    """(good, bad, solves): the bracket closed to ``rtol`` relative to ``good.at`` or to
    ``atol``, whichever is wider."""
    goods = [good]
    solves = 0
    bisect_next = False

    def tol():
        return max(rtol * abs(good.at), atol)
    while abs(good.at - bad.at) > tol():
        width = abs(good.at - bad.at)
        aim = None if bisect_next else _aim(goods, bad)
        lo, hi = sorted((good.at, bad.at))
        if aim is None or not lo < aim < hi:
            aim = None
        toward_bad = 1.0 if bad.at > good.at else -1.0
        if aim is None:
            tries = [0.5 * (good.at + bad.at)]
        else:
            half = AIM_MARGIN * tol()
            tries = [aim - toward_bad * half, aim + toward_bad * half]
            tries = [t for t in tries if lo < t < hi] or [0.5 * (good.at + bad.at)]
        for at in tries:
            p = probe(at, start_of(good))
            solves += 1
            if p.ok:
                good = p
                goods.append(p)
            else:
                bad = p
                break  # past the end already: the outside test is not needed
        bisect_next = abs(good.at - bad.at) > SLOW_ROUND * width
    return good, bad, solves
