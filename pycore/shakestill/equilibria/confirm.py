"""Edges predicted cheaply, confirmed and placed by the exact method.

Several links with joint dampers do not split exactly into sway modes (the
dampers couple them), but the modes' own Hill determinants still put most
edges within about 1e-3 of the exact one (the caller corrects that by the
neighbours' shift where it can). A row found that way is taken over
by the exact monodromy at a few points: a verdict on each side of every
predicted edge, as close as CONFIRM_HALF_WIDTHS allow (one verdict in a row
without edges); away from the edges the modes' verdict stands. The edge is
then placed in its confirmed bracket (the secant of the exact margin when the
bracket is already within the chart's precision; a tight bracket that misses
is re-aimed by its secant while the aim stays within AIM_REACH, a wider one
aims a tight one by its secant, and Brent's method closes it only if that
misses). A prediction the exact method
does not bear out returns None, and the caller walks the row exactly.
"""

from __future__ import annotations

from typing import Callable

from .floquet import Stability
from .lines import Edge, Probe, edge_between

# Relative half-widths of the brackets tried around a predicted edge, tightest first; a
# bracket of 1e-4 relative width already holds the edge to the chart's 1e-4 target.
CONFIRM_HALF_WIDTHS = (5e-5, 1e-3, 2e-2)
AIMS = 2  # tightest brackets re-aimed by the margin's secant before the wider ones
# ... while the aim stays this close to the prediction (relative): as far as the widest
# bracket reaches. A prediction 1e-3 to 1e-2 off (dampers near a tongue's tip) is found by
# a re-aim or two (4-6 verdicts) instead of the wide brackets and Brent's method (15-22
# measured on three-link charts, 2026-12-05); a re-aim that runs wild costs its 2 verdicts.
AIM_REACH = CONFIRM_HALF_WIDTHS[-1]
REAL = 1e-9  # relative imaginary part of a multiplier taken as real (eigvals' round-off)


def confirm_edges(exact: Probe, predicted: tuple[Edge, ...], stable_at_lo: bool, lo: float,
                  hi: float, *, rtol: float, prefix: list | None = None) -> tuple[Edge, ...] | None:
    """The predicted row's edges confirmed and placed by ``exact``, or None; then the edges
    confirmed before the first refused one are left in ``prefix`` (if given)."""
    if not predicted:  # one verdict for a row without edges
        return () if exact((lo * hi) ** 0.5).stable == stable_at_lo else None
    found, state, last = [], stable_at_lo, lo
    for edge in predicted:
        placed = None if edge.gained == state else place_edge(exact, edge, state, last, hi, rtol)
        if placed is None:
            if prefix is not None:
                prefix[:] = found
            return None
        found.append(placed)
        state, last = edge.gained, placed.x
    return tuple(found)


def place_edge(exact: Probe, edge: Edge, before: bool, last: float, hi: float,
               rtol: float) -> Edge | None:
    """The exact edge in the tightest confirmed bracket around a predicted ``edge`` (the
    verdict ``before`` it, nothing nearer than ``last`` or past ``hi``), or None.

    A tightest bracket that misses (both verdicts alike) is aimed again, up to AIMS times, at
    the zero of the secant through its two points (of det(M -+ I) or the margin:
    ``_edge_function``); a wider bracket that confirms is aimed at by its secant in the same
    way before Brent's method is asked to close it (on the margin)."""
    aim = edge.x
    for _ in range(1 + AIMS):
        placed, a, b = _tight(exact, aim, before, edge.gained, last, hi)
        if placed is not None or a is None or a[1].stable != b[1].stable:
            break
        f = _edge_function(a[1], b[1])
        fa, fb = f(a[1]), f(b[1])
        if fa == fb:
            break
        aim = a[0] - fa * (b[0] - a[0]) / (fb - fa)
        if not abs(aim / edge.x - 1) < AIM_REACH:
            break
    if placed is not None:
        return placed
    for half in CONFIRM_HALF_WIDTHS[1:]:
        a, b = max(last, edge.x * (1 - half)), min(hi, edge.x * (1 + half))
        if not a < b:
            return None
        sa, sb = exact(a), exact(b)
        if sa.stable == before and sb.stable == edge.gained:
            f = _edge_function(sa, sb)
            placed, _, _ = _tight(exact, _secant(a, f(sa), b, f(sb)), before, edge.gained, a, b)
            return placed or edge_between(exact, (a, sa), (b, sb), rtol=rtol)
    return None


def _tight(exact: Probe, aim: float, before: bool, gained: bool, last: float, hi: float):
    """(edge or None, (a, verdict), (b, verdict)): the tightest bracket about ``aim`` (within
    [last, hi]) and, where its verdicts confirm, the edge by the margin's secant in it."""
    half = CONFIRM_HALF_WIDTHS[0]
    a, b = max(last, aim * (1 - half)), min(hi, aim * (1 + half))
    if not a < b:
        return None, None, None
    sa, sb = exact(a), exact(b)
    if sa.stable == before and sb.stable == gained:
        f = _edge_function(sa, sb)
        return Edge(_secant(a, f(sa), b, f(sb)), gained), (a, sa), (b, sb)
    return None, (a, sa), (b, sb)


def _edge_function(sa: Stability, sb: Stability) -> Callable[[Stability], float]:
    """A function of a point's multipliers for secants between these two points, as smooth
    through their edge as can be: the characteristic polynomial at +1 or -1, det(M -+ I) =
    prod (rho_k -+ 1), where one real multiplier leaves the unit circle there (the point
    further out has no other outside it), or, with none outside, where the multiplier
    nearest +1 or -1 will leave, and that value changes sign between the points (or not,
    for two points on one side); else the margin (log of the largest |rho|).

    With dampers the margin is flat on the stable side (a pair of multipliers on a circle
    of radius below 1) and turns where the pair meets on the real axis, just inside the
    edge, so secants of the margin across the edge land up to their bracket's width off;
    det(M -+ I) is a polynomial in the monodromy's entries, smooth through that meeting.
    Only secants use it, in brackets whose verdicts are then checked: another multiplier
    may pass +-1 inside the unit circle elsewhere, which is no edge."""
    top = max((sa, sb), key=lambda s: s.margin)
    outside = [r for r in top.multipliers if abs(r) > 1.0]
    if len(outside) > 1 or (outside and abs(outside[0].imag) > REAL * abs(outside[0])):
        return _margin
    # one real multiplier outside; or none, and the pair nearest +1 or -1 is the one that
    # will leave there (on the damped stable side the margin is flat: no secant in it)
    rho = outside[0] if outside else min(top.multipliers,
                                         key=lambda r: min(abs(r - 1.0), abs(r + 1.0)))
    side = 1.0 if rho.real > 0 else -1.0

    def at_one(s: Stability) -> float:
        value = 1.0
        for r in s.multipliers:
            value *= r - side
        return value.real

    a, b = at_one(sa), at_one(sb)
    if (sa.stable != sb.stable) == ((a > 0) != (b > 0)) and a != b:
        return at_one
    return _margin


def _margin(s: Stability) -> float:
    return s.margin


def _secant(a: float, fa: float, b: float, fb: float) -> float:
    """The zero of f by linear interpolation, kept inside [a, b]."""
    if fa == fb:
        return 0.5 * (a + b)
    return min(b, max(a, a - fa * (b - a) / (fb - fa)))


def tight_edge(exact: Probe, aim: float, before: bool, gained: bool, last: float,
               hi: float) -> Edge | None:
    """The edge in the tightest bracket about ``aim`` if its two verdicts confirm it."""
    return _tight(exact, aim, before, gained, last, hi)[0]
