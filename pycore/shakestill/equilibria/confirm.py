"""Edges predicted cheaply, confirmed and placed by the exact method.

Several links with joint dampers do not split exactly into sway modes (the
dampers couple them), but the modes' own Hill determinants still put every
edge within about 1e-4 of the exact one. A row found that way is taken over
by the exact monodromy at a few points: a verdict on each side of every
predicted edge, as close as CONFIRM_HALF_WIDTHS allow (one verdict in a row
without edges); away from the edges the modes' verdict stands. The edge is
then placed in its confirmed bracket (the secant of the exact margin when the
bracket is already within the chart's precision, else Brent's method). A prediction the exact method
does not bear out returns None, and the caller walks the row exactly.
"""

from __future__ import annotations

from .lines import Edge, Probe, edge_between

# Relative half-widths of the brackets tried around a predicted edge, tightest first; a
# bracket of 1e-4 relative width already holds the edge to the chart's 1e-4 target.
CONFIRM_HALF_WIDTHS = (5e-5, 1e-3, 2e-2)


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
    verdict ``before`` it, nothing nearer than ``last`` or past ``hi``), or None."""
    for half in CONFIRM_HALF_WIDTHS:
        a, b = max(last, edge.x * (1 - half)), min(hi, edge.x * (1 + half))
        if not a < b:
            return None
        sa, sb = exact(a), exact(b)
        if sa.stable == before and sb.stable == edge.gained:
            if half == CONFIRM_HALF_WIDTHS[0]:
                return Edge(_secant(a, sa.margin, b, sb.margin), edge.gained)
            return edge_between(exact, (a, sa), (b, sb), rtol=rtol)
    return None


def _secant(a: float, fa: float, b: float, fb: float) -> float:
    """The margin's zero by linear interpolation, kept inside [a, b]."""
    if fa == fb:
        return 0.5 * (a + b)
    return min(b, max(a, a - fa * (b - a) / (fb - fa)))
