"""The planner: the operating point (speed, stroke) that holds with the most margin for every
rig of the uncertainty set (the rig file's ``spreads``), inside the rig's limits.

Metric. At a point, the speed margin is the distance from the ends of the wander
(``uncertainty.wander``) to the nearest stability edge along speed, in per cent of
the speed; the stroke margin likewise along stroke, in per cent of the stroke. The
margin of the point is min(speed margin, stroke margin / stroke_weight) over
every rig of the set and every chosen equilibrium (stroke_weight 1: the smaller
of the two). A rig limit ends a line but is no stability edge: a side without an
edge sets no margin, and a point with no edge on any side scores MARGIN_CAP.

Search. Every rig of the set is charted (``chart.chart_steps``); the robust region
is, row by row, what every rig holds: the unstable intervals of all rigs are
paired by order (the same tongue) and each pair's hull taken, because a tongue
sweeps the speeds between its positions at the set's ends (edges monotone in the
rig's numbers); rows whose counts differ fall back to the union, and the notes say
how many. The margin is scored on that grid, then the best grid points are
polished by a pattern search on exact edges (line walks as ``windows.window``, edges to
1e-10). The search remembers every stretch of a line it walked and found stable (a later
point inside it has the edge that walk found), and scores a candidate only until an edge
closer than the best margin so far shows that it loses.
"""

from __future__ import annotations

import bisect
import math
from dataclasses import dataclass, replace
from typing import Callable, Iterator

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.rig import Rig, max_stroke_m, with_operating_point
from .chart import chart_steps
from .lines import Probe, scan_settings, speed_points, stroke_points, walk
from .uncertainty import RigSet, rig_set, wander

MARGIN_CAP = 1000.0  # per cent: scored where no stability edge bounds the point at all
DEFAULT_ROWS = 40  # stroke rows of each rig's chart (one link)
DEFAULT_ROWS_SEVERAL_LINKS = 12  # each point is an RK monodromy: fewer rows
SPEED_SAMPLES = 160  # speeds per row at which the margin is scored on the grid
START_POINTS = 3  # best grid points polished on exact edges
POLISH_HALVINGS = 4  # pattern-search step halvings (from one grid cell to 1/16 of it)
REACH_SLACK = 2.0  # a polishing candidate looks for edges to twice the best margin so far
FOR_CHOICES = {"inverted": ("inverted",), "hanging": ("hanging",), "both": ("inverted", "hanging")}


@dataclass(frozen=True)
class Score:
    """The worst margin at a point over the set, and what sets it."""

    margin: float  # per cent (weighted as the metric says); < 0: not robust
    speed_margin: float
    stroke_margin: float
    rig_index: int | None
    equilibrium: str | None
    edge: dict | None  # {"axis", "side", "at_rpm"/"at_m", "edge"}


def _rows_of(c, eq):
    return [(r.y, r.speed_min, r.speed_max, r.stable_intervals(eq)) for r in c.rows]


def _unstable(lo, hi, stable):
    out, at = [], lo
    for a, b in stable:
        if a > at:
            out.append([at, a])
        at = b
    if at < hi:
        out.append([at, hi])
    return out


def robust_rows(charts: list, eq: str) -> tuple[list, int]:
    """[(y, speed_min, speed_max, robust stable intervals)] and the count of rows whose
    tongues did not pair up across the set (there: the union of unstable intervals)."""
    per_rig = [_rows_of(c, eq) for c in charts]
    out, unpaired = [], 0
    for rows in zip(*per_rig):
        y, lo, hi = rows[0][0], rows[0][1], rows[0][2]
        bad = [_unstable(lo, hi, r[3]) for r in rows]
        if len({len(b) for b in bad}) == 1:
            merged = [[min(b[i][0] for b in bad), max(b[i][1] for b in bad)]
                      for i in range(len(bad[0]))]
        else:
            unpaired += 1
            merged = [iv for b in bad for iv in b]
        merged.sort()
        union = []
        for a, b in merged:
            if union and a <= union[-1][1]:
                union[-1][1] = max(union[-1][1], b)
            else:
                union.append([a, b])
        stable, at = [], lo
        for a, b in union:
            if a > at:
                stable.append([at, a])
            at = max(at, b)
        if at < hi:
            stable.append([at, hi])
        out.append((y, lo, hi, stable))
    return out, unpaired


def _combine(speed_margin: float, stroke_margin: float, weight: float) -> float:
    return min(speed_margin, stroke_margin / weight, MARGIN_CAP)


def grid_scores(rig: Rig, rows_by_eq: dict, feasible, weight: float):
    """[(margin, speed, stroke)] on the grid of rows x SPEED_SAMPLES speeds (feasible only)."""
    first = next(iter(rows_by_eq.values()))
    ys = [r[0] for r in first]
    lo, hi = rig.limits.speed_rpm
    lo = max(lo, 1e-6)
    speeds = [lo * (hi / lo) ** (k / (SPEED_SAMPLES - 1)) for k in range(SPEED_SAMPLES)]
    out = []
    for j, y in enumerate(ys):
        if y <= 0:
            continue
        for v in speeds:
            vl, vh, sl, sh = wander(rig, v, y)
            if not feasible(vl, vh, sl, sh):
                continue
            m = MARGIN_CAP
            for rows in rows_by_eq.values():
                m = min(m, _grid_margin(rows, j, v, vl, vh, sl, sh, weight))
            out.append((m, v, y))
    return out


def _containing(stable, a, b):
    i = bisect.bisect_right([iv[0] for iv in stable], a) - 1
    return stable[i] if i >= 0 and stable[i][1] >= b else None


def _grid_margin(rows, j, v, vl, vh, sl, sh, weight) -> float:
    near = [k for k, r in enumerate(rows) if sl - 1e-15 <= r[0] <= sh + 1e-15] or [j]
    speed_m = MARGIN_CAP
    for k in near:
        y, lo, hi, stable = rows[k]
        iv = _containing(stable, vl, vh)
        if iv is None:
            return -1.0
        if iv[0] > lo:
            speed_m = min(speed_m, 100 * (vl - iv[0]) / v)
        if iv[1] < hi:
            speed_m = min(speed_m, 100 * (iv[1] - vh) / v)
    stroke_m = MARGIN_CAP
    y = rows[j][0]
    for step, end in ((1, sh), (-1, sl)):
        k = max(near) if step > 0 else min(near)
        while 0 <= k + step < len(rows) and _containing(rows[k + step][3], vl, vh):
            k += step
        if 0 <= k + step < len(rows):
            edge = 0.5 * (rows[k][0] + rows[k + step][0])
            stroke_m = min(stroke_m, 100 * step * (edge - end) / y)
    return _combine(speed_m, stroke_m, weight)


def nearest_edge(model: Rig | Model, eq: str, axis: str, speed: float, stroke: float,
                 direction: int, reach: float, memo: dict | None = None):
    """(edge or None, stable at the point): the first edge met from (speed, stroke) along
    ``axis`` in ``direction`` (+1 up, -1 down), looking at most ``reach`` (a fraction of the
    start) far and never past the rig's limits; edges to EDGE_RTOL as in the windows. The
    line moves the one derived model (``Model.at``).

    ``memo`` (a dict kept by the caller for one model set) remembers every stretch of a line
    walked and found stable (from its start to its edge, or to where the look stopped): a later
    point inside such a stretch has the nearest edge that walk found, without a new walk (the
    pattern search moves one coordinate at a time, so half of its lines were walked before)."""
    model = as_model(model)
    rig = model.rig
    here = speed if axis == "speed" else stroke
    if axis == "speed":
        lo, hi = max(rig.limits.speed_rpm[0], 1e-6), rig.limits.speed_rpm[1]
    else:
        lo, hi = rig.limits.stroke_m[0], max_stroke_m(rig)
    stop = min(hi, here * (1 + reach)) if direction > 0 else max(lo, here * (1 - reach))
    key = (id(model), eq, axis, stroke if axis == "speed" else speed, direction)
    for start, end, edge in (memo.get(key, ()) if memo is not None else ()):
        inside = (here - start) * direction >= 0 and (
            (end - here) * direction > 0 if edge is not None else (end - here) * direction >= 0)
        if inside and (edge is not None or (stop - end) * direction <= 0):
            return edge, True

    def point(x):
        return (x, stroke) if axis == "speed" else (speed, x)
    corners = [model.at(*point(x)) for x in (here, stop)]
    probe = Probe(model, eq, point, scan_settings(model, eq, corners))
    s0 = probe(here)
    if not s0.stable:
        return None, False
    found = None
    if (stop - here) * direction > 0:
        points = (speed_points(model, here, stop) if axis == "speed"
                  else stroke_points(lo, hi, here, stop))
        found = next((e.x for e in walk(probe, here, s0, points)), None)
    if memo is not None:
        memo.setdefault(key, []).append((here, stop if found is None else found, found))
    return found, True


def exact_score(rigs: RigSet, nominal: Rig, equilibria, speed: float, stroke: float,
                weight: float, reach: float = MARGIN_CAP / 100, memo: dict | None = None,
                floor: float = -math.inf, first: int | None = None) -> Score:
    """The margin at a point on exact edges of every rig of the set; edges farther than
    ``reach`` (a fraction) are not looked for, so a margin above it reads as ``reach``
    (``memo``: see ``nearest_edge``). A search that only needs to know whether the point
    beats a margin gives it as ``floor``: the scoring stops at the first edge closer than
    that (the score is then an upper bound that loses), starting with rig ``first``."""
    vl, vh, sl, sh = wander(nominal, speed, stroke)
    worst = Score(min(MARGIN_CAP, 100 * reach), MARGIN_CAP, MARGIN_CAP, None, None, None)
    sides = [("speed", -1, s_at) for s_at in sorted({sl, sh})] + [
        ("speed", 1, s_at) for s_at in sorted({sl, sh})] + [
        ("stroke", -1, v_at) for v_at in sorted({vl, vh})] + [
        ("stroke", 1, v_at) for v_at in sorted({vl, vh})]
    order = sorted(range(len(rigs.models)), key=lambda k: k != first)
    for i in order:
        r = rigs.models[i]
        for eq in equilibria:
            for axis, direction, at in sides:
                v, s = (speed, at) if axis == "speed" else (at, stroke)
                end = (vl if direction < 0 else vh) if axis == "speed" else (
                    sl if direction < 0 else sh)
                base = speed if axis == "speed" else stroke
                look = reach + abs(end - base) / base
                edge, stable = nearest_edge(r, eq, axis, v, s, direction, look, memo)
                if not stable:
                    return Score(-1.0, -1.0, -1.0, i, eq, {"axis": axis, "side": "unstable",
                                                           "edge": None})
                if edge is None:
                    continue
                dist = 100 * direction * (edge - end) / base
                sp, st = (dist, MARGIN_CAP) if axis == "speed" else (MARGIN_CAP, dist)
                m = _combine(sp, st, weight)
                if m < worst.margin:
                    info = {"axis": axis, "side": "low" if direction < 0 else "high",
                            "edge": edge, ("at_m" if axis == "speed" else "at_rpm"): at}
                    worst = Score(m, min(worst.speed_margin, sp), min(worst.stroke_margin, st),
                                  i, eq, info)
                    if m <= floor:
                        return worst
                else:
                    worst = replace(worst, speed_margin=min(worst.speed_margin, sp),
                                    stroke_margin=min(worst.stroke_margin, st))
    return worst


def loads_feasible(rig: Rig, heaviest_kg: float) -> Callable:
    """feasible(speed lo, speed hi, stroke lo, stroke hi): the wander box inside the limits,
    and the held equilibrium's drive force (heaviest rig: (M + carriage)(g + y_p'')), power
    (force x pivot velocity) and peak acceleration under the loads' limits where given."""
    lim = rig.limits
    top = max_stroke_m(rig)

    def feasible(vl, vh, sl, sh) -> bool:
        if vl < lim.speed_rpm[0] or vh > lim.speed_rpm[1] or sl < lim.stroke_m[0] or sh > top:
            return False
        if lim.max_accel_m_s2 is None and lim.max_force_N is None and lim.max_power_W is None:
            return True
        drive = with_operating_point(rig, speed_rpm=vh, stroke_m=sh).drive
        accel = drv.peak_accel_m_s2(drive)
        if lim.max_accel_m_s2 is not None and accel > lim.max_accel_m_s2:
            return False
        force = heaviest_kg * (rig.g_m_s2 + accel)
        if lim.max_force_N is not None and force > lim.max_force_N:
            return False
        if lim.max_power_W is not None:
            power = max(abs(heaviest_kg * (rig.g_m_s2 + p.a_m_s2) * p.v_m_s)
                        for p in (drv.pivot(drive, 2 * math.pi * k / 64) for k in range(64)))
            if power > lim.max_power_W:
                return False
        return True
    return feasible


def _polish(score, start: tuple, dv: float, ds: float, feasible, nominal) -> tuple:
    """Pattern search on the exact score from ``start`` (speed, stroke); steps halve. Each
    candidate looks for edges only a little beyond the best margin so far."""
    best = (score(*start, MARGIN_CAP / 100), start)
    for _ in range(POLISH_HALVINGS):
        moved = True
        while moved:
            moved = False
            v, s = best[1]
            for cand in ((v * (1 + dv), s), (v / (1 + dv), s), (v, s + ds), (v, s - ds)):
                if cand[1] <= 0 or not feasible(*wander(nominal, *cand)):
                    continue
                sc = score(*cand, REACH_SLACK * max(best[0].margin, 1.0) / 100,
                           best[0].margin + 1e-9, best[0].rig_index)
                if sc.margin > best[0].margin + 1e-9:
                    best, moved = (sc, cand), True
        dv, ds = dv / 2, ds / 2
    return score(*best[1], MARGIN_CAP / 100), best[1]


@dataclass(frozen=True)
class Plan:
    speed_rpm: float | None
    stroke_m: float | None
    score: Score | None
    rig_set: RigSet
    equilibria: tuple[str, ...]
    robust: dict  # equilibrium -> rows [(y, speed_min, speed_max, stable intervals)]
    unpaired_rows: int
    weight: float
    evaluations: int
    notes: tuple[str, ...]


def plan_steps(rig: Rig | Model, *, equilibria=("inverted",), rows: int | None = None,
               stroke_weight: float = 1.0, feasible: Callable | None = None
               ) -> Iterator[tuple[float, str, Plan | None]]:
    """Yield (fraction, stage, None) while working and (1.0, "done", Plan) at the end.

    ``stroke_weight`` (> 0, default 1) divides the stroke margin in the metric;
    ``feasible`` overrides the limits test (see ``loads_feasible``).
    """
    for eq in equilibria:
        if eq not in ("inverted", "hanging"):
            raise ValueError(f"equilibria: {eq!r} is not 'inverted' or 'hanging'")
    if not (stroke_weight > 0 and math.isfinite(stroke_weight)):
        raise ValueError(f"stroke_weight: {stroke_weight!r} must be a finite number above 0")
    yield 0.0, "the rigs of the set", None
    model = as_model(rig)
    rig = model.rig
    rs = rig_set(rig)  # every rig derived once, all charted over the same strokes
    if rows is None:
        rows = DEFAULT_ROWS if rig.n_links == 1 else DEFAULT_ROWS_SEVERAL_LINKS
    charts, evaluations = [], 0
    for k, member in enumerate(rs.models):
        last = None
        for frac, last in chart_steps(member, rows=rows, equilibria=tuple(equilibria),
                                      columns=False):  # the rows are all the region needs
            yield 0.7 * (k + frac) / len(rs.rigs), f"charting rig {k + 1} of {len(rs.rigs)}", None
        charts.append(last)
        evaluations += last.evaluations
    robust, unpaired = {}, 0
    for eq in equilibria:
        robust[eq], n = robust_rows(charts, eq)
        unpaired += n
    feasible = feasible or loads_feasible(rig, rs.max_mass_kg)
    yield 0.72, "scoring the grid", None
    grid = sorted(grid_scores(rig, robust, feasible, stroke_weight), reverse=True)
    notes = [rs.method] if rig.spreads else [
        "the rig file gives no spreads: the plan is for the nominal rig alone (add 'spreads' "
        "to plan for the rig as it really is)"]
    if rs.idle:
        notes.append("do not enter the linear stability: " + ", ".join(rs.idle))
    if unpaired:
        notes.append(f"{unpaired} rows whose tongues did not pair up across the set: there the "
                     "region is what every rig of the set holds, not the swept tongues")
    if not grid or grid[0][0] <= 0:
        yield 1.0, "done", Plan(None, None, None, rs, tuple(equilibria), robust, unpaired,
                                stroke_weight, evaluations, tuple(notes + [
                                    f"no point of the grid ({rows} strokes x {SPEED_SAMPLES} "
                                    "speeds over the limits) holds for every rig of the set: "
                                    "there is none inside the limits, or the robust region is "
                                    "narrower than a grid cell (more rows or narrower limits "
                                    "would show it)"]))
        return
    ys = [r[0] for r in next(iter(robust.values()))]
    dv = (rig.limits.speed_rpm[1] / max(rig.limits.speed_rpm[0], 1e-6)) ** (
        1 / (SPEED_SAMPLES - 1)) - 1
    ds = ys[1] - ys[0]

    memo: dict = {}  # stretches of lines already walked (exact edges, reused)

    def score(v, s, reach, floor=-math.inf, first=None):
        return exact_score(rs, rig, equilibria, v, s, stroke_weight, reach, memo, floor, first)

    starts = []
    for m, v, s in grid:
        if len(starts) == START_POINTS:
            break
        if all(abs(math.log(v / a)) > 3 * dv or abs(s - b) > 3 * ds for a, b in starts):
            starts.append((v, s))
    yield 0.75, f"scoring the best {len(starts)} grid points on exact edges", None
    top = (-math.inf, starts[0])  # each start only has to beat the best so far
    for v, s in starts:
        m = score(v, s, MARGIN_CAP / 100, top[0]).margin
        if m > top[0]:
            top = (m, (v, s))
    yield 0.8, "polishing the best", None
    best = _polish(score, top[1], dv, ds, feasible, rig)
    notes.append(f"grid: {len(ys)} strokes x {SPEED_SAMPLES} speeds; the best {len(starts)} "
                 f"scored on exact edges, the best of them polished to "
                 f"1/{2 ** POLISH_HALVINGS} of a grid cell")
    yield 1.0, "done", Plan(best[1][0], best[1][1], best[0], rs, tuple(equilibria), robust,
                            unpaired, stroke_weight, evaluations, tuple(notes))


def plan(rig: Rig | Model, **options) -> Plan:
    """The finished plan (see ``plan_steps`` for the options)."""
    result = None
    for _, _, result in plan_steps(rig, **options):
        pass
    return result
