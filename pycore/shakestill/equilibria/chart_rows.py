"""One row of the stability chart: a stroke (or a peak acceleration) walked along speed.

A row follows the edges of its computed neighbour rows where they agree
(bracketed root finding near the interpolated edges, spot-checked across the
row), else it is walked whole with the tongue-safe line scan of module
``lines``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.rig import OutOfReach, Problem, Rig, max_stroke_m
from .lines import Probe, edge_between, scan_settings, speed_points, walk
from .reach import MAX_SPEED_RPM, floor_words, scan_floor_rpm

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
# and one step per drive harmonic where the check takes two: a crank's harmonics past the
# rates' own step count are small, and multipliers stay within ~1e-8 of solve_ivp's
# (tests/test_magnus.py; measured 2026-12-04 on two- and three-link cranks: <= 7e-9).
CHART_HARMONIC_STEPS = 1
# The chart's price of an RK step of a 2 x 2 trace against lines.HILL_BAND_US (0.25): the
# Magnus trace measured 2026-12-04 side by side with Hill's band at 1.1-1.4 us a Magnus step
# against 0.04-0.06 us a band unit, i.e. 1.25 : 0.05 = 6.25 : 0.25 (in whole crank charts
# 6.25 beat 9.4 by 30%: wider bands cost more a unit).
CHART_RK_STEP_US = 6.25
# RK steps of the sway modes of a chain whose dampers couple them: the modes then only
# predict its edges, which the chain's exact monodromy confirms and places within
# confirm.CONFIRM_HALF_WIDTHS[0] (5e-5) of them, so steps twice as long do: the predicted
# edges moved by at most 3e-7 relative and the exact ones not at all (three-link crank,
# 2026-12-05), and Magnus is then cheaper than Hill's wider bands for the short modes.
PREDICTOR_STEP_PHASE = 0.8
PREDICTOR_MIN_STEPS = 8
# The chain's Taylor steps of chart points (cycle.chain_steps): multipliers to ~5e-9
# relative of max(1, |rho|) against solve_ivp on two- and three-link sine and crank drives,
# a shorter rod too, where the check's settings give ~1e-10 (measured 2026-12-05)
CHART_CYCLE_PHASE = 1.4
CHART_DRIVE_TOLERANCE = 1e-7


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


def row_line(model: Rig | Model, y_axis: str, y: float):
    """(point(x) -> (speed, stroke), speed_min, speed_max) for a row, or None if empty.
    Give the derived model where there is one: a rig is derived again for the speed range."""
    lo, hi = speed_range(model)
    rig = as_model(model).rig
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


def chart_settings(model: Model, eq: str, corners: list[Model], modal=None,
                   predictor: bool = False):
    """The chart's scan settings for a line between ``corners`` (its RK steps above);
    ``predictor``: for sway modes whose edges the chain's exact monodromy confirms."""
    return scan_settings(model, eq, corners,
                         step_phase=PREDICTOR_STEP_PHASE if predictor else CHART_STEP_PHASE,
                         min_steps=PREDICTOR_MIN_STEPS if predictor else CHART_MIN_STEPS,
                         per_harmonic=CHART_HARMONIC_STEPS, modal=modal,
                         step_us=CHART_RK_STEP_US, cycle_phase=CHART_CYCLE_PHASE,
                         drive_tolerance=CHART_DRIVE_TOLERANCE)


def row_settings(model: Model, point, lo: float, hi: float, eq: str, modal=None,
                 predictor: bool = False):
    return chart_settings(model, eq, [model.at(v, point(v)[1]) for v in (lo, hi)], modal,
                          predictor)


def scan_row(model: Model, y_axis: str, y: float, equilibria, guide=None,
             predictor: bool = False) -> Row | None:
    """One row: follow the edges of two computed neighbour rows where they agree
    (bracketed root finding near the interpolated edges), else walk the whole row.
    ``predictor``: ``model`` is a sway mode of a chain that confirms the row's edges."""
    line = row_line(model, y_axis, y)
    if line is None:
        return None
    point, lo, hi = line
    edges, start_verdicts, count = {}, {}, 0
    for eq in equilibria:
        probe = Probe(model, eq, point, row_settings(model, point, lo, hi, eq,
                                                     predictor=predictor))
        s0, edges[eq] = line_edges(probe, lo, hi, guide(eq, y) if guide else None)
        start_verdicts[eq] = s0.stable
        count += probe.count
    return Row(y, lo, hi, edges, start_verdicts, count)


def line_edges(probe: Probe, lo: float, hi: float, prediction=None):
    """(verdict at lo, edges along the row): near the neighbours' edges, else a whole walk."""
    s0 = probe(lo)
    followed = _follow(probe, lo, hi, s0, prediction)
    if followed is None:
        followed = tuple(walk(probe, lo, s0, speed_points(probe.model, lo, hi,
                                                          step=CHART_SPEED_STEP),
                              rtol=CHART_RTOL))
    return s0, followed


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
        # clamped: lo * (hi / lo) ** 1 can round past hi (a row a few ulps wide raised
        # StopIteration below)
        x = min(hi, max(lo, lo * (hi / lo) ** (k / (FOLLOW_CHECKS + 1))))
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


def predict(a: Row, b: Row, eq: str, y: float):
    """(verdict at the row start, [(x, spread, gained)]) if rows a and b agree, else None
    (also when either row left the equilibrium out)."""
    if eq not in a.edges or eq not in b.edges:
        return None
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
