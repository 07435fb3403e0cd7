"""The stability chart: where, over drive speed x stroke (or peak acceleration), each
equilibrium holds.

Every row (a stroke, or a peak acceleration) is walked along speed with the
tongue-safe line scan of module ``lines``, so each boundary crossing is a
root of the stability margin found to EDGE_RTOL, not a cell edge. Rows are
computed coarse-first (every COARSE_EVERY-th, then the rest), so a caller
can show a rough picture early; ``chart_steps`` yields progress between rows
and can simply be dropped to cancel.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Iterator

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.linear import EQUILIBRIA
from ..model.modes import STRONG_MIXING, damper_mixing
from ..model.rig import Rig, max_stroke_m, with_operating_point
from .chart_columns import column_edges, column_speeds
from .chart_modes import damped_hanging_frequencies_hz, modal_row_steps, modes_predict
from .chart_rows import (CHART_RTOL, CHART_SPEED_STEP, Row, predict, scan_row, speed_range,
                         stroke_for_peak_accel)
from .confirm import CONFIRM_HALF_WIDTHS
from .floquet import modes_decouple
from .lines import PHASE_STEP
from .reach import CEILING_WORDS, floor_words

COARSE_EVERY = 8  # first pass walks every 8th row whole; the rest follow their edges
DEFAULT_ROWS = 120  # for every link count: several links are taken by their sway modes
COLUMN_WORDS = ("at {} evenly spaced speeds, an edge between two rows that no pair of the rows' "
                "edges explains (a boundary running along speed, such as the upright "
                "pendulum's upper edge) is traced in y by root finding to the same precision")
ACCEL_LINES_G = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000)  # candidate iso-lines
G0 = 9.80665


@dataclass(frozen=True)
class Chart:
    y_axis: str  # "stroke" or "accel"
    speed_range: tuple[float, float]
    y_range: tuple[float, float]
    rows: tuple[Row, ...]
    tongues: tuple[dict, ...]
    evaluations: int
    complete: bool
    notes: tuple[str, ...]
    # equilibrium -> edges traced in y at fixed speeds where the rows cannot place them
    columns: dict = field(default_factory=dict)
    # a drive off vertical: the rig's tilt (deg) and side stroke (m) that this map leaves out
    off_vertical: tuple[float, float] | None = None
    # off vertical: the held orbit's windows through the operating point (motion.lean's
    # held_windows, set by the command: this layer knows no orbits)
    held_orbit: dict | None = None


def _y_range(rig: Rig, y_axis: str) -> tuple[float, float]:
    top = max_stroke_m(rig)
    if y_axis == "stroke":
        return rig.limits.stroke_m[0], top
    return 0.0, drv.peak_accel_m_s2(with_operating_point(rig, stroke_m=top).drive,
                                    rig.limits.speed_rpm[1])


def _row_order(n: int) -> list[int]:
    """Coarse rows first, then the rows between by bisection (every gap's middle row, then
    the middles of the halves, ...), so each row has computed neighbours close on both sides."""
    coarse = sorted(set(range(0, n, COARSE_EVERY)) | {n - 1})
    order, gaps = list(coarse), list(zip(coarse, coarse[1:]))
    while gaps:
        halves = []
        for a, b in gaps:
            if b - a > 1:
                m = (a + b) // 2
                order.append(m)
                halves += [(a, m), (m, b)]
        gaps = halves
    return order


def tongues(rig: Rig | Model) -> tuple[dict, ...]:
    """Where the hanging position's parametric resonances sit: drive frequency 2 f_i / n,
    f_i the sway modes' frequencies, or the damped chain's own where its dampers mix the
    modes (``chart_modes.damped_hanging_frequencies_hz``)."""
    model = as_model(rig)
    rig = model.rig
    lo, hi = rig.limits.speed_rpm
    out = []
    frequencies = (model.properties.hanging_frequencies_hz if modes_predict(model)
                   else damped_hanging_frequencies_hz(model))
    for mode, f in enumerate(frequencies):
        for n in range(1, 200):
            rpm = 2 * f / n * 60
            if rpm < lo:
                break
            if rpm <= hi:
                out.append({"order": n, "mode": mode, "speed_rpm": rpm,
                            "label": f"n={n}" + (f" (mode {mode + 1})" if rig.n_links > 1 else "")})
    return tuple(out)


def chart_steps(rig: Rig | Model, *, rows: int | None = None, y_axis: str = "stroke",
                equilibria=EQUILIBRIA, columns: bool = True) -> Iterator[tuple[float, Chart]]:
    """Yield (fraction done, chart so far) after each row; the last chart is complete.

    ``rows`` defaults to DEFAULT_ROWS. ``columns`` False leaves out the edges traced along
    y at fixed speeds (module ``chart_columns``) for callers that read the rows only.
    """
    model = as_model(rig)
    rig = model.rig
    if rows is None:
        rows = DEFAULT_ROWS
    if y_axis not in ("stroke", "accel"):
        raise ValueError(f"y_axis: {y_axis!r} is not 'stroke' or 'accel'")
    if not 2 <= rows <= 2000:
        raise ValueError(f"rows: {rows!r} must be from 2 to 2000")
    for eq in equilibria:
        if eq not in EQUILIBRIA:
            raise ValueError(f"equilibria: {eq!r} is not one of {EQUILIBRIA}")
    y0, y1 = _y_range(rig, y_axis)
    ys = [y0 + (y1 - y0) * j / (rows - 1) for j in range(rows)]
    lo, hi = speed_range(model)
    done: dict[int, Row] = {}
    total = 0
    notes = ("coarse rows are walked whole (a scan every {:g}% of speed or {:g} of a tongue "
             "spacing, every local peak of the margin searched); the rows between follow the "
             "edges of their nearest computed neighbours (filled in by bisection) by bracketed root finding, and are walked whole "
             "where the neighbours disagree; edges are refined to {:g} relative in speed; a "
             "feature that starts and ends between two coarse rows ({:.3g} of the y range) "
             "is not seen".format(100 * CHART_SPEED_STEP, PHASE_STEP, CHART_RTOL,
                                  COARSE_EVERY / (rows - 1)),)
    if rig.n_links > 1:
        notes += (_modes_words(model),)
    if lo > max(rig.limits.speed_rpm[0], 1e-6):
        notes += (f"the chart starts at {lo:.4g} rpm, above the rig's lowest speed: "
                  + floor_words(model),)
    if hi < rig.limits.speed_rpm[1]:
        notes += (f"the chart stops at {hi:.4g} rpm, below the rig's highest speed: "
                  + CEILING_WORDS,)
    if rig.drive.off_vertical:  # the map's Floquet verdicts are of the vertical positions
        notes += ("the map is of the positions with the drive vertical: off vertical the "
                  "check's verdict and windows are those of the held orbit (on the stroke view, "
                  "bars through the operating point), and the lean chart shows how far it "
                  "leans",)
    off_vertical = ((rig.drive.axis_tilt_deg, rig.drive.side_stroke_m)
                    if rig.drive.off_vertical else None)
    marks = tongues(model)
    if rig.n_links == 1 or not modes_predict(model):
        steps = _row_steps(model, ys, y_axis, equilibria)
    else:
        predictor = not modes_decouple(model)  # the chain's exact monodromy confirms
        steps = modal_row_steps(model, lo, y_axis, equilibria,
                                lambda mode, needed: _row_steps(mode, ys, y_axis, equilibria,
                                                                needed, predictor))
    for k, (j, row) in enumerate(steps):
        if row is not None:
            done[j] = row
            total += row.evaluations
        partial = Chart(y_axis, (lo, hi), (y0, y1), tuple(done[i] for i in sorted(done)),
                        marks, total, False, notes, off_vertical=off_vertical)
        yield (k + 1) / (rows + 1), partial
    traced, speeds = {}, column_speeds((lo, hi)) if columns else []
    for eq in equilibria if columns else ():
        traced[eq], spent = column_edges(model, partial.rows, y_axis, eq, speeds)
        total += spent
    yield 1.0, replace(partial, evaluations=total, complete=True, columns=traced,
                       notes=notes + ((COLUMN_WORDS.format(len(speeds)),) if columns else ()))


def _row_steps(model: Model, ys: list[float], y_axis: str, equilibria, needed=None,
               predictor: bool = False):
    """(row index, row or None) for every row, coarse rows first (``_row_order``).
    ``needed(j, equilibrium)``, if given, leaves an equilibrium out of row j when false
    (the row then has no edges for it); ``predictor``: see ``scan_row``."""
    rows = len(ys)
    order = _row_order(rows)
    coarse = set(order[:len(set(range(0, rows, COARSE_EVERY)) | {rows - 1})])
    done: dict[int, Row] = {}

    def guide(j):
        # the nearest computed rows: a row walked whole where its neighbours disagreed
        # guides the rows on either side of it
        below = max((i for i in done if i < j), default=None)
        above = min((i for i in done if i > j), default=None)
        if below is None or above is None:
            return None
        return lambda eq, y: predict(done[below], done[above], eq, y)

    for j in order:
        wanted = [eq for eq in equilibria if needed is None or needed(j, eq)]
        row = scan_row(model, y_axis, ys[j], wanted, None if j in coarse else guide(j),
                       predictor)
        if row is not None:
            done[j] = row
        yield j, row


def _modes_words(model: Model) -> str:
    """How several links were computed, for the chart's notes."""
    words = ("several links: each sway mode is charted as a one-link pendulum of its "
             "equivalent length and the chain holds where every mode holds (Acheson 1993)")
    if modes_decouple(model):
        return words + "; no damping couples the modes, so this is exact"
    if not modes_predict(model):
        return ("several links: the joint dampers mix the sway modes too much for them to "
                f"predict the chain (mixing {damper_mixing(model.modes, model.rig.g_m_s2):.2g}, over "
                f"{STRONG_MIXING:g}: cross damping against the gap between two modes' "
                "rates), so every row is walked by the chain's exact monodromy")
    return (f"{words}; the joint dampers couple the modes ({model.modes.coupling:.2g}), so "
            "every edge is confirmed by the chain's exact monodromy within "
            f"{CONFIRM_HALF_WIDTHS[0]:g} relative and placed there, and a row the exact "
            "method does not bear out is walked by it")


def chart(rig: Rig | Model, **options) -> Chart:
    """The complete chart (see ``chart_steps`` for the options)."""
    result = None
    for _, result in chart_steps(rig, **options):
        pass
    return result


def boundaries(c: Chart, equilibrium: str) -> list[dict]:
    """Edges linked into polylines [(speed, y), ...]: the rows' edges from row to row, and
    the edges traced at fixed speeds (``Chart.columns``) from speed to speed."""
    by_rows = _polylines([(row.y, [(e.x, e.gained) for e in row.edges.get(equilibrium, ())])
                          for row in c.rows], 0.08 * (c.speed_range[1] - c.speed_range[0]))
    speeds: dict[float, list] = {}
    for e in c.columns.get(equilibrium, ()):
        speeds.setdefault(e.speed_rpm, []).append((e.y, e.gained))
    by_columns = _polylines(sorted(speeds.items()), 0.08 * (c.y_range[1] - c.y_range[0]))
    lines = [{"equilibrium": equilibrium, "gained": gained, "points": [[x, y] for x, y in pts]}
             for gained, pts in by_rows]
    lines += [{"equilibrium": equilibrium, "gained": gained, "points": [[x, y] for y, x in pts]}
              for gained, pts in by_columns]
    for line in lines:
        line["kind"] = _edge_kind(equilibrium, line["gained"])
    return lines


def _polylines(stations, gap: float) -> list[tuple[bool, list]]:
    """Edges at successive stations (position, [(coordinate, gained), ...]) linked into
    (gained, [(coordinate, position), ...]): an edge continues the open line of its kind
    nearest to it within ``gap``."""
    open_lines: list[tuple[bool, list]] = []
    finished: list[tuple[bool, list]] = []
    for position, edges in stations:
        taken, still_open = set(), []
        for gained, points in open_lines:
            last = points[-1][0]
            near = [(abs(coord - last), i) for i, (coord, kind) in enumerate(edges)
                    if i not in taken and kind == gained and abs(coord - last) <= gap]
            if not near:
                finished.append((gained, points))
                continue
            best = min(near)[1]
            taken.add(best)
            points.append((edges[best][0], position))
            still_open.append((gained, points))
        still_open += [(kind, [(coord, position)]) for i, (coord, kind) in enumerate(edges)
                       if i not in taken]
        open_lines = still_open
    return finished + open_lines


def _edge_kind(equilibrium: str, gained: bool) -> str:
    if equilibrium == "inverted":
        return "lower (Kapitza-type) edge" if gained else "upper edge"
    return "tongue edge"


def chart_dict(c: Chart) -> dict:
    """Plain data for JSON: rows with edges and stable intervals, polylines, tongues."""
    eqs = list(c.rows[0].edges) if c.rows else []
    return {
        "y_axis": c.y_axis,
        "speed_range_rpm": list(c.speed_range),
        "y_range": list(c.y_range),
        "y_unit": "m" if c.y_axis == "stroke" else "m/s^2",
        "rows": [{"y": r.y, "speed_min_rpm": r.speed_min, "speed_max_rpm": r.speed_max,
                  **{eq: {"edges": [[e.x, e.gained] for e in r.edges[eq]],
                          "stable_intervals_rpm": r.stable_intervals(eq)} for eq in eqs}}
                 for r in c.rows],
        "column_edges": {eq: [[e.speed_rpm, e.y, e.gained] for e in c.columns.get(eq, ())]
                         for eq in eqs},
        "boundaries": [b for eq in eqs for b in boundaries(c, eq)],
        "tongues": list(c.tongues),
        "evaluations": c.evaluations,
        "complete": c.complete,
        "notes": list(c.notes),
        # off vertical only (a vertical rig's JSON is unchanged): what this map is of
        **({"drive_as_mapped": "vertical", "rig_axis_tilt_deg": c.off_vertical[0],
            "rig_side_stroke_m": c.off_vertical[1]} if c.off_vertical else {}),
        **({"held_orbit": c.held_orbit} if c.held_orbit is not None else {}),
    }


def accel_lines(c: Chart, rig: Rig, *, points: int = 48, most: int = 5) -> list[tuple]:
    """Lines of constant peak pivot acceleration (in g) across a stroke chart."""
    if c.y_axis != "stroke":
        return []
    lo, hi = c.speed_range
    y0, y1 = c.y_range
    corner = drv.peak_accel_m_s2(with_operating_point(rig, stroke_m=y1).drive, hi) / G0
    chosen = [g for g in ACCEL_LINES_G if g < corner][-most:]
    out = []
    for g_value in chosen:
        line = []
        for k in range(points + 1):
            speed = lo + (hi - lo) * k / points
            stroke = stroke_for_peak_accel(rig, g_value * G0, speed)
            if y0 <= stroke <= y1:
                line.append([speed, stroke])
        if len(line) > 1:
            out.append((g_value, line))
    return out
