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

import math
from dataclasses import dataclass
from typing import Iterator

from ..model import drive as drv
from .lines import PHASE_STEP, Probe, edge_between, scan_settings, speed_points, walk
from ..model.linear import EQUILIBRIA
from ..model.derived import Model, as_model
from ..model.rig import OutOfReach, Problem, Rig, max_stroke_m, with_operating_point
from .reach import CEILING_WORDS, MAX_SPEED_RPM, floor_words, scan_floor_rpm

COARSE_EVERY = 8  # first pass walks every 8th row whole; the rest follow their edges
CHART_SPEED_STEP = 0.1  # relative speed step of a whole-row walk (peaks are still searched)
CHART_RTOL = 1e-8  # edges in a chart to this relative precision (the target is 1e-4)
FOLLOW_SLACK = 0.002  # bracket half-width added to half the neighbours' spread (relative)
# A first, tighter bracket (a fraction of the spread plus a smaller slack): interpolated
# edges are usually much closer than that, and a narrow bracket saves Brent iterations.
FOLLOW_TIGHT = 0.0625
FOLLOW_TIGHT_SLACK = 5e-5
FOLLOW_CHECKS = 6  # verdicts spot-checked across a followed row (geometrically spaced)
# RK steps of chart points: about half the check's, multipliers still to ~1e-8 relative
# (measured against 4x the steps on crank drives), so edges stay far inside the 1e-4 target.
CHART_STEP_PHASE = 0.4
CHART_MIN_STEPS = 12
DEFAULT_ROWS = 120
DEFAULT_ROWS_SEVERAL_LINKS = 30  # each point costs an RK monodromy: a coarser map by default
ACCEL_LINES_G = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000, 2000)  # candidate iso-lines
G0 = 9.80665


@dataclass(frozen=True)
class Row:
    """One row of the chart: its y value, stroke per speed, and each equilibrium's edges."""

    y: float  # stroke_m, or peak acceleration in m/s^2
    speed_min: float  # the row's first speed (accel rows start where the stroke fits)
    speed_max: float
    edges: dict  # equilibrium -> tuple[Edge, ...] along increasing speed
    stable_at_min: dict  # equilibrium -> verdict at speed_min
    evaluations: int

    def stable_intervals(self, equilibrium: str) -> list[list[float]]:
        out, start = [], self.speed_min if self.stable_at_min[equilibrium] else None
        for e in self.edges[equilibrium]:
            if e.gained:
                start = e.x
            elif start is not None:
                out.append([start, e.x])
                start = None
        if start is not None:
            out.append([start, self.speed_max])
        return out


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


def stroke_for_peak_accel(rig: Rig, accel_m_s2: float, speed_rpm: float) -> float:
    """The stroke giving this peak pivot acceleration at this speed.

    Sine and samples scale linearly with stroke; for a crank the peak is at top dead
    centre, r omega^2 (1 + r / l), which solves as a quadratic in r.
    """
    omega = 2 * math.pi * speed_rpm / 60
    per = accel_m_s2 / omega ** 2  # metres of d2y/dphi2 needed
    d = rig.drive
    if d.waveform == "crank":
        rod = d.rod_length_m
        r = 0.5 * rod * (math.sqrt(1 + 4 * per / rod) - 1)
        return 2 * r
    unit = drv.peak_phase_accel_m(d) / d.stroke_m if d.stroke_m > 0 else 0.5
    return per / unit


def _row_line(rig: Rig, y_axis: str, y: float):
    """(point(x) -> (speed, stroke), speed_min, speed_max) for a row, or None if empty."""
    lo, hi = speed_range(rig)
    if y_axis == "stroke":
        return (lambda x: (x, y)), lo, hi
    top = max_stroke_m(rig)
    # accel rows: speeds at which the needed stroke fits the mechanism
    if stroke_for_peak_accel(rig, y, hi) > top:
        return None
    if stroke_for_peak_accel(rig, y, lo) > top:
        a, b = lo, hi
        for _ in range(60):
            m = 0.5 * (a + b)
            a, b = (m, b) if stroke_for_peak_accel(rig, y, m) > top else (a, m)
        lo = b
    return (lambda x: (x, stroke_for_peak_accel(rig, y, x))), lo, hi


def _row_settings(model: Model, point, lo: float, hi: float, eq: str):
    corners = [model.at(v, point(v)[1]) for v in (lo, hi)]
    return scan_settings(model, eq, corners, step_phase=CHART_STEP_PHASE,
                         min_steps=CHART_MIN_STEPS)


def _scan_row(model: Model, y_axis: str, y: float, equilibria, guide=None) -> Row | None:
    """One row: follow the edges of two computed neighbour rows where they agree
    (bracketed root finding near the interpolated edges), else walk the whole row."""
    line = _row_line(model.rig, y_axis, y)
    if line is None:
        return None
    point, lo, hi = line
    edges, start_verdicts, count = {}, {}, 0
    for eq in equilibria:
        probe = Probe(model, eq, point, _row_settings(model, point, lo, hi, eq))
        s0 = probe(lo)
        followed = _follow(probe, lo, hi, s0, guide(eq, y) if guide else None)
        if followed is None:
            followed = tuple(walk(probe, lo, s0, speed_points(model, lo, hi,
                                                              step=CHART_SPEED_STEP),
                                  rtol=CHART_RTOL))
        edges[eq] = followed
        start_verdicts[eq] = s0.stable
        count += probe.count
    return Row(y, lo, hi, edges, start_verdicts, count)


def _follow(probe: Probe, lo: float, hi: float, s0, prediction):
    """Edges near predicted positions, or None when the prediction does not hold."""
    if prediction is None:
        return None
    verdict, predicted = prediction
    if s0.stable != verdict:
        return None
    found = []
    state = s0.stable
    last = lo
    for x_pred, spread, gained in predicted:
        if gained == state:
            return None
        for half in (spread * FOLLOW_TIGHT + FOLLOW_TIGHT_SLACK * x_pred,
                     spread / 2 + FOLLOW_SLACK * x_pred):
            a, b = max(last, x_pred - half), min(hi, x_pred + half)
            if not a < b:
                return None
            sa, sb = probe(a), probe(b)
            if sa.stable == state and sb.stable == gained:
                break
        else:
            return None
        found.append(edge_between(probe, (a, sa), (b, sb), rtol=CHART_RTOL))
        state, last = gained, found[-1].x
    # Spot checks across the row: a region the neighbours do not show sends the row to a walk.
    cuts = [lo] + [e.x for e in found] + [hi]
    verdicts = [s0.stable]
    for e in found:
        verdicts.append(e.gained)
    for k in range(1, FOLLOW_CHECKS + 2):  # the last one is the row's end
        x = lo * (hi / lo) ** (k / (FOLLOW_CHECKS + 1))
        span = next(i for i in range(len(cuts) - 1) if cuts[i] <= x <= cuts[i + 1])
        if probe(x).stable != verdicts[span]:
            return None
    return tuple(found)


def speed_range(model: Rig | Model) -> tuple[float, float]:
    """The chart's speeds: the rig's limits, from no lower than the slowest speed the
    stability scans resolve (module ``reach``)."""
    lo, hi = as_model(model).rig.limits.speed_rpm
    floor = scan_floor_rpm(model)
    if floor >= hi:
        raise OutOfReach([Problem("limits.speed_rpm", f"{[lo, hi]} rpm is outside what this "
                                  f"method can resolve: {floor_words(model)}")])
    return max(lo, 1e-6, floor), min(hi, max(MAX_SPEED_RPM, lo))


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
    """Where the hanging position's parametric resonances sit: drive frequency 2 f_i / n."""
    model = as_model(rig)
    rig = model.rig
    lo, hi = rig.limits.speed_rpm
    out = []
    for mode, f in enumerate(model.properties.hanging_frequencies_hz):
        for n in range(1, 200):
            rpm = 2 * f / n * 60
            if rpm < lo:
                break
            if rpm <= hi:
                out.append({"order": n, "mode": mode, "speed_rpm": rpm,
                            "label": f"n={n}" + (f" (mode {mode + 1})" if rig.n_links > 1 else "")})
    return tuple(out)


def chart_steps(rig: Rig | Model, *, rows: int | None = None, y_axis: str = "stroke",
                equilibria=EQUILIBRIA) -> Iterator[tuple[float, Chart]]:
    """Yield (fraction done, chart so far) after each row; the last chart is complete.

    ``rows`` defaults to DEFAULT_ROWS for one link and DEFAULT_ROWS_SEVERAL_LINKS otherwise.
    """
    model = as_model(rig)
    rig = model.rig
    if rows is None:
        rows = DEFAULT_ROWS if rig.n_links == 1 else DEFAULT_ROWS_SEVERAL_LINKS
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
    if lo > max(rig.limits.speed_rpm[0], 1e-6):
        notes += (f"the chart starts at {lo:.4g} rpm, above the rig's lowest speed: "
                  + floor_words(model),)
    if hi < rig.limits.speed_rpm[1]:
        notes += (f"the chart stops at {hi:.4g} rpm, below the rig's highest speed: "
                  + CEILING_WORDS,)
    if rig.drive.off_vertical:  # the map's Floquet verdicts are of the vertical positions
        notes += ("the map is of the positions with the drive vertical: off vertical the "
                  "check's verdict and windows are those of the held orbit, and the lean chart "
                  "shows how far it leans",)
    order = _row_order(rows)
    marks = tongues(model)
    coarse = sorted(order[:len(set(range(0, rows, COARSE_EVERY)) | {rows - 1})])

    def guide(j):
        # the nearest computed rows: a row walked whole where its neighbours disagreed
        # guides the rows on either side of it
        below = max((i for i in done if i < j), default=None)
        above = min((i for i in done if i > j), default=None)
        if below is None or above is None:
            return None
        return lambda eq, y: _predict(done[below], done[above], eq, y)

    for k, j in enumerate(order):
        row = _scan_row(model, y_axis, ys[j], equilibria, None if j in coarse else guide(j))
        if row is not None:
            done[j] = row
            total += row.evaluations
        partial = Chart(y_axis, (lo, hi), (y0, y1), tuple(done[i] for i in sorted(done)),
                        marks, total, k == len(order) - 1, notes)
        yield (k + 1) / len(order), partial


def _predict(a: Row, b: Row, eq: str, y: float):
    """(verdict at the row start, [(x, spread, gained)]) if rows a and b agree, else None."""
    ea, eb = a.edges[eq], b.edges[eq]
    if a.stable_at_min[eq] != b.stable_at_min[eq] or len(ea) != len(eb):
        return None
    if any(p.gained != q.gained for p, q in zip(ea, eb)) or a.speed_min != b.speed_min:
        return None
    t = (y - a.y) / (b.y - a.y)
    out = []
    for p, q in zip(ea, eb):
        x = p.x + t * (q.x - p.x)
        out.append((x, abs(q.x - p.x), p.gained))
    return a.stable_at_min[eq], out


def chart(rig: Rig | Model, **options) -> Chart:
    """The complete chart (see ``chart_steps`` for the options)."""
    result = None
    for _, result in chart_steps(rig, **options):
        pass
    return result


def boundaries(c: Chart, equilibrium: str) -> list[dict]:
    """Edges of neighbouring rows linked into polylines [(speed, y), ...]."""
    open_lines: list[dict] = []
    finished: list[dict] = []
    gap = 0.08 * (c.speed_range[1] - c.speed_range[0])
    for row in c.rows:
        taken = set()
        still_open = []
        for line in open_lines:
            last_x = line["points"][-1][0]
            best = None
            for i, e in enumerate(row.edges.get(equilibrium, ())):
                if i in taken or e.gained != line["gained"]:
                    continue
                if abs(e.x - last_x) <= gap and (best is None or
                                                 abs(e.x - last_x) < abs(row.edges[equilibrium][best].x - last_x)):
                    best = i
            if best is None:
                finished.append(line)
            else:
                taken.add(best)
                line["points"].append([row.edges[equilibrium][best].x, row.y])
                still_open.append(line)
        for i, e in enumerate(row.edges.get(equilibrium, ())):
            if i not in taken:
                still_open.append({"equilibrium": equilibrium, "gained": e.gained,
                                   "points": [[e.x, row.y]]})
        open_lines = still_open
    finished.extend(open_lines)
    for line in finished:
        line["kind"] = _edge_kind(equilibrium, line["gained"])
    return finished


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
        "boundaries": [b for eq in eqs for b in boundaries(c, eq)],
        "tongues": list(c.tongues),
        "evaluations": c.evaluations,
        "complete": c.complete,
        "notes": list(c.notes),
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
