"""Edges the chart's rows cannot place: boundaries that run nearly along speed.

Rows find their edges in speed. A boundary running along speed (the upright
pendulum's upper edge at high speed, where the stroke reaches its flutter
limit, or the top of a tongue) crosses few rows, and between two rows its
stroke would be known only to the row spacing. So at each of COLUMNS speeds,
wherever two neighbouring rows disagree and no pair of their edges sweeps
across that speed, the edge is found by root finding in the row's y (stroke
or peak acceleration) to the rows' precision.
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass

from ..model.derived import Model
from .chart_modes import modes_predict
from .chart_rows import CHART_RTOL, Row, chart_settings, stroke_for_peak_accel
from .confirm import place_edge, tight_edge
from .floquet import modes_decouple
from .lines import Probe, edge_between

COLUMNS = 200  # speeds, evenly spaced over the chart, at which such edges are traced


@dataclass(frozen=True)
class ColumnEdge:
    """Where the equilibrium's verdict changes moving up in y at a fixed speed."""

    speed_rpm: float
    y: float
    gained: bool  # True if the equilibrium becomes stable moving up


def column_speeds(speed_range: tuple[float, float]) -> list[float]:
    lo, hi = speed_range
    return [lo + (hi - lo) * (k + 0.5) / COLUMNS for k in range(COLUMNS)]


def column_edges(model: Model, rows: tuple[Row, ...], y_axis: str, equilibrium: str,
                 speeds: list[float]) -> tuple[tuple[ColumnEdge, ...], int]:
    """(edges between neighbouring rows that the rows' own edges do not explain, ordered by
    speed then y; stability evaluations spent)."""
    found, count = [], 0
    shifts: dict = {}  # (row gap, gained) -> exact / modal y of the last edge traced there
    path: dict = {}  # (row gap, gained) -> [(speed, y)] of the last two exact edges there
    verdicts = [_verdicts(row, equilibrium, speeds) for row in rows]
    for k, (below, above) in enumerate(zip(rows, rows[1:])):
        for x, stable_below, stable_above in zip(speeds, verdicts[k], verdicts[k + 1]):
            if not (max(below.speed_min, above.speed_min) <= x <= min(below.speed_max,
                                                                     above.speed_max)):
                continue
            if stable_below == stable_above or _swept(below, above, equilibrium, x):
                continue
            edge, spent = _trace(model, y_axis, equilibrium, x, below.y, above.y, shifts, k,
                                 stable_above, path.setdefault((k, stable_above), []))
            count += spent
            if edge is not None:
                found.append(edge)
    found.sort(key=lambda e: (e.speed_rpm, e.y))
    return tuple(found), count


def _verdicts(row: Row, equilibrium: str, speeds: list[float]) -> list[bool]:
    """The row's verdict at each of the (ascending) speeds: inside a closed stable interval."""
    intervals = row.stable_intervals(equilibrium)
    starts = [a for a, _ in intervals]
    out = []
    for x in speeds:
        k = bisect_right(starts, x) - 1  # the last interval starting at or below x
        out.append(k >= 0 and x <= intervals[k][1])
    return out


def _swept(below: Row, above: Row, equilibrium: str, x: float) -> bool:
    """True if an edge of one row and an edge of the same kind in the other lie on either
    side of x: a boundary crossing the rows' gap at a slant, already placed in speed."""
    for e in below.edges[equilibrium]:
        for f in above.edges[equilibrium]:
            if e.gained == f.gained and min(e.x, f.x) <= x <= max(e.x, f.x):
                return True
    return False


def _trace(model: Model, y_axis: str, equilibrium: str, x: float, y0: float, y1: float,
           shifts: dict, gap: int, gained: bool, path: list):
    """The edge between y0 and y1 at speed x by root finding, or None if the exact verdicts
    at the ends agree after all (a point on a row's edge). Several links whose dampers
    couple the modes: found on the modes, then confirmed and placed by the exact monodromy
    (module ``confirm``), as the rows are, aimed by the dampers' shift of the same edge at
    the last speed traced in this row gap (``shifts``, updated here): the shift changes
    slowly with speed, so the tightest bracket there usually confirms it; where it does not,
    the modal edge is confirmed as the rows' edges are (an aim that missed costs two verdicts).
    Before any of that, where the same edge was placed exactly at the two speeds just before
    this one (``path``, updated here), one tight bracket at their straight line's value here:
    a boundary running along speed is smooth, and the line lands inside that bracket nine
    times in ten on the three-link benchmarks, so the modes are not asked at all."""
    rig = model.rig
    if y_axis == "stroke":
        def point(y):
            return x, y
    else:
        def point(y):
            return x, stroke_for_peak_accel(rig, y, x)
    coupled = rig.n_links > 1 and not modes_decouple(model) and modes_predict(model)
    exact = _probe(model, equilibrium, point, y0, y1, modal=False if coupled else None)
    if coupled and len(path) == 2 and _evenly_spaced(path[0][0], path[1][0], x):
        (xa, ya), (xb, yb) = path
        placed = tight_edge(exact, yb + (yb - ya) * (x - xb) / (xb - xa), not gained, gained,
                            y0, y1)
        if placed is not None:
            path[:] = [path[1], (x, placed.x)]
            return ColumnEdge(x, placed.x, placed.gained), exact.count
    probe = _probe(model, equilibrium, point, y0, y1, modal=True, predictor=True) \
        if coupled else exact
    a, b = (y0, probe(y0)), (y1, probe(y1))
    if a[1].stable == b[1].stable:
        return None, probe.count
    edge = edge_between(probe, a, b, rtol=CHART_RTOL)
    if coupled:
        key = gap, edge.gained
        placed = None
        if key in shifts:  # one tight bracket where the shift points; the modal edge if not
            placed = tight_edge(exact, edge.x * shifts[key], a[1].stable, edge.gained, y0, y1)
        if placed is None:
            placed = place_edge(exact, edge, a[1].stable, y0, y1, CHART_RTOL)
        if placed is None:
            a, b = (y0, exact(y0)), (y1, exact(y1))
            placed = edge_between(exact, a, b, rtol=CHART_RTOL) if \
                a[1].stable != b[1].stable else None
        if placed is not None and edge.x != 0.0:
            shifts[key] = placed.x / edge.x
        edge = placed
        if edge is not None and edge.gained == gained:
            path[:] = path[-1:] + [(x, edge.x)]
    count = probe.count + (exact.count if coupled else 0)
    return (None if edge is None else ColumnEdge(x, edge.x, edge.gained)), count


def _evenly_spaced(xa: float, xb: float, x: float) -> bool:
    """True if xa, xb, x are neighbouring speeds of the columns (no column left between)."""
    step = x - xb
    return step > 0 and abs((xb - xa) / step - 1) < 1e-9


def _probe(model: Model, equilibrium: str, point, y0: float, y1: float, modal,
           predictor: bool = False) -> Probe:
    corners = [model.at(*point(y)) for y in (y0, y1)]
    return Probe(model, equilibrium, point,
                 chart_settings(model, equilibrium, corners, modal, predictor))
