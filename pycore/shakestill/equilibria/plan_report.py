"""The plan as plain data (``shakestill plan --json``): the recommended point, its worst-case
margin and what binds it, the robust region in the chart's row form and its size, the
sensitivity table and the run-up advice."""

from __future__ import annotations

from ..model.derived import Model, as_model, derive
from ..model.rig import Rig, with_operating_point
from ..model.rigfile import rig_to_dict
from ..model.spreads import OPERATING_PATHS, number_at, split_path, with_number
from .lines import Probe, edge_between, scan_settings
from .plan import MARGIN_CAP, Plan, nearest_edge
from .runup import DEFAULT_FACTOR, recommended_rate
from .uncertainty import IDLE, wander

SENSITIVITY_STEP = 1e-4  # relative step of the central differences (edges are to 1e-10)
NEAR = 1e-3  # a perturbed rig's edge is looked for this close (relative) to the nominal one
EDGES = (("speed", -1, "speed_low_rpm"), ("speed", 1, "speed_high_rpm"),
         ("stroke", -1, "stroke_low_m"), ("stroke", 1, "stroke_high_m"))


def _edges(model: Model, eq: str, speed: float, stroke: float, near: dict | None = None) -> dict:
    """The four edges nearest the point; with ``near`` (the nominal rig's edges) each is
    found between brackets NEAR around the nominal one (a step of 1e-4 moves an edge far
    less), walking the line as for the nominal rig only where the bracket does not hold
    one; no nominal edge, no edge (a walk to the limits for nothing)."""
    out = {}
    for axis, direction, name in EDGES:
        if near is None:
            out[name] = nearest_edge(model, eq, axis, speed, stroke, direction,
                                     MARGIN_CAP / 100)[0]
        elif near[name] is None:
            out[name] = None
        else:
            out[name] = _edge_near(model, eq, axis, speed, stroke, direction, near[name])
    return out


def _edge_near(model: Model, eq: str, axis: str, speed: float, stroke: float, direction: int,
               guess: float) -> float | None:
    def point(x):
        return (x, stroke) if axis == "speed" else (speed, x)
    a, b = guess * (1 - NEAR), guess * (1 + NEAR)
    probe = Probe(model, eq, point, scan_settings(model, eq, [model.at(*point(a)),
                                                               model.at(*point(b))]))
    sa, sb = probe(a), probe(b)
    if sa.stable != sb.stable:
        return edge_between(probe, (a, sa), (b, sb)).x
    return nearest_edge(model, eq, axis, speed, stroke, direction, MARGIN_CAP / 100)[0]


def sensitivity(rig: Rig | Model, equilibria, speed: float, stroke: float) -> list[dict]:
    """How far each stability edge nearest the point moves per unit change (SI) of each
    uncertain number, by central differences on exact edges of the nominal rig; also the
    move across half the spread (what the spread is worth). For the speed and the stroke
    the point itself moves: the edges across the line move with the boundary's slope. Each
    perturbed rig is derived once for its four edges."""
    model = as_model(rig)
    rig = model.rig
    nominal = {eq: _edges(model, eq, speed, stroke) for eq in equilibria}
    out = []
    for s in rig.spreads:
        value = number_at(rig, s.path)
        lo, hi = s.range(value)
        h = SENSITIVITY_STEP * (abs(value) or (hi - lo) / 2 or 1.0)
        row = {"path": s.path, "spread": s.text, "value": value, "low": lo, "high": hi}
        idle = split_path(s.path)[-1][0] in IDLE
        moved = {} if idle or s.path in OPERATING_PATHS else {
            sign: derive(with_number(rig, s.path, value + sign * h)) for sign in (-1, 1)}
        for eq in equilibria:
            if idle:
                row[eq] = {"note": "does not enter the linear stability"}
                continue
            if s.path in OPERATING_PATHS:  # the point itself moves: the edges' slope
                dv, ds = (h, 0.0) if s.path == "drive.speed_rpm" else (0.0, h)
                up = _edges(model, eq, speed + dv, stroke + ds, nominal[eq])
                down = _edges(model, eq, speed - dv, stroke - ds, nominal[eq])
            else:
                up = _edges(moved[+1], eq, speed, stroke, nominal[eq])
                down = _edges(moved[-1], eq, speed, stroke, nominal[eq])
            per = {}
            for _, _, name in EDGES:
                if up[name] is None or down[name] is None:
                    per[name] = None
                    continue
                slope = (up[name] - down[name]) / (2 * h)
                per[name] = {"per_unit": slope, "over_half_spread": slope * (hi - lo) / 2}
            row[eq] = per
        out.append(row)
    return out


def region_dict(p: Plan, rig: Rig) -> dict:
    """The robust region as chart rows, and its size as a share of the limits' box."""
    eqs = list(p.robust)
    rows = p.robust[eqs[0]]
    lo, hi = rig.limits.speed_rpm
    box = (hi - lo) * (rows[-1][0] - rows[0][0]) if len(rows) > 1 else 0.0
    dy = (rows[-1][0] - rows[0][0]) / (len(rows) - 1) if len(rows) > 1 else 0.0
    # the trapezoid rule over the rows (the end rows stand for half a row each), so that a
    # region filling the limits is 100% of them
    last = len(rows) - 1
    area = {eq: sum((0.5 if j in (0, last) else 1.0) * (b - a)
                    for j, r in enumerate(p.robust[eq]) for a, b in r[3]) * dy for eq in eqs}
    out = {"y_axis": "stroke", "y_unit": "m", "speed_range_rpm": [lo, hi],
           "y_range": [rows[0][0], rows[-1][0]],
           "rows": [{"y": r[0], "speed_min_rpm": r[1], "speed_max_rpm": r[2],
                     **{eq: {"stable_intervals_rpm": p.robust[eq][j][3]} for eq in eqs}}
                    for j, r in enumerate(rows)],
           "area_rpm_m": area,
           "area_percent_of_limits": {eq: 100 * a / box if box else 0.0 for eq, a in area.items()},
           "rigs": len(p.rig_set.rigs), "unpaired_rows": p.unpaired_rows}
    return out


def plan_dict(p: Plan, rig: Rig | Model, *, factor: float = DEFAULT_FACTOR) -> dict:
    """Plain data for JSON (exactly the JSON of ``shakestill plan --json``)."""
    model = as_model(rig)
    rig = model.rig
    out = {"for": list(p.equilibria), "speed_rpm": p.speed_rpm, "stroke_m": p.stroke_m,
           "worst_margin_percent": None, "speed_margin_percent": None,
           "stroke_margin_percent": None, "stroke_weight": p.weight,
           "metric": ("the smallest distance, over every rig of the set and both ends of the "
                      "operating point's wander, to a stability edge: along speed in per cent "
                      "of the speed, along stroke in per cent of the stroke divided by "
                      f"stroke_weight ({p.weight:g}); limits bound the search and are no edges; "
                      f"{MARGIN_CAP:g} where no edge bounds the point"),
           "binding": None, "wander": None, "robust_region": region_dict(p, rig),
           "sensitivity": [], "runup": None, "set": {"method": p.rig_set.method,
                                                     "rigs_tried": p.rig_set.tried,
                                                     "rigs": list(p.rig_set.labels),
                                                     "not_in_stability": list(p.rig_set.idle)},
           "evaluations": p.evaluations, "notes": list(p.notes)}
    if p.score is None:
        return out
    sc = p.score
    vl, vh, sl, sh = wander(rig, p.speed_rpm, p.stroke_m)
    out.update({"worst_margin_percent": sc.margin, "speed_margin_percent": sc.speed_margin,
                "stroke_margin_percent": sc.stroke_margin,
                "wander": {"speed_rpm": [vl, vh], "stroke_m": [sl, sh]}})
    if sc.rig_index is not None:
        member = p.rig_set.rigs[sc.rig_index]
        out["binding"] = {"equilibrium": sc.equilibrium, "edge": sc.edge,
                          "rig_values": p.rig_set.labels[sc.rig_index],
                          "rig": rig_to_dict(with_operating_point(
                              member, speed_rpm=p.speed_rpm, stroke_m=p.stroke_m))}
    out["sensitivity"] = sensitivity(model, p.equilibria, p.speed_rpm, p.stroke_m)
    rate = recommended_rate(model.at(p.speed_rpm, p.stroke_m), factor=factor,
                            equilibria=("hanging",))
    out["runup"] = {"min_rate_rpm_s": rate, "factor": factor, "from_rpm": 0.0,
                    "to_rpm": p.speed_rpm, "stroke_m": p.stroke_m,
                    "note": "the smallest ramp rate from rest that keeps a disturbance of the "
                            "hanging position from growing more than the factor through the "
                            "resonances crossed (shakestill runup without --rate)"}
    return out
