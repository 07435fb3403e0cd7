"""Speed and stroke windows: how far the operating point may move before stability is lost.

Each side walks away from the operating point (module ``lines``) and stops
at the first edge (a tongue is never bridged) or at the rig's limit.
"""

from __future__ import annotations

from dataclasses import dataclass

from .floquet import Stability
from .lines import (PHASE_STEP, SPEED_STEP, STROKE_POINTS, Probe, scan_settings, speed_points,
                    stroke_points, walk)
from ..model.derived import Model, as_model
from ..model.rig import Rig, max_stroke_m
from .reach import CEILING_WORDS, MAX_SPEED_RPM, floor_words, scan_floor_rpm


@dataclass(frozen=True)
class Window:
    """An interval of speed (rpm) or stroke (m) around the operating point."""

    axis: str  # "speed" or "stroke"
    low: float | None
    high: float | None
    low_is_edge: bool = False  # True: a stability edge; False: the rig's limit
    high_is_edge: bool = False
    evaluations: int = 0
    resolution: str = ""
    message: str = ""

    @property
    def interval(self) -> list[float] | None:
        return None if self.low is None else [self.low, self.high]


# A scan of a still pivot would only meet the zero-width bands at 2 f0 / n, where an undamped
# pendulum's multipliers touch -1 or 1 without leaving the unit circle: no edge there.
STILL_WORDS = ("with no stroke the pivot stands still: there is no parametric resonance and the "
               "speed does not change stability, so the speed window is the rig's speed limits")


def _first_edge(probe: Probe, start: float, s0: Stability, stop: float, points):
    for edge in walk(probe, start, s0, points):
        return edge.x, True
    return stop, False


def window(rig: Rig | Model, equilibrium: str, axis: str,
           s0: Stability | None = None) -> Window:
    """The speed (rpm) or stroke (m) window of ``equilibrium`` around the operating point."""
    model = as_model(rig)
    rig = model.rig
    if axis not in ("speed", "stroke"):
        raise ValueError(f"axis: {axis!r} is not 'speed' or 'stroke'")
    speed, stroke = rig.drive.speed_rpm, rig.drive.stroke_m
    low_note = high_note = ""
    if axis == "speed":
        lo, hi = max(rig.limits.speed_rpm[0], 1e-6), rig.limits.speed_rpm[1]
        if lo < scan_floor_rpm(model) < hi:  # slower scans would not end in reasonable time
            lo = scan_floor_rpm(model)
            low_note = "the speed window stops at the slowest speed this method resolves: " + \
                floor_words(model)
        if hi > MAX_SPEED_RPM:
            hi = max(MAX_SPEED_RPM, lo)
            high_note = "the speed window stops at the fastest speed this method resolves: " + \
                CEILING_WORDS
        here = speed
        corners = [model.at(speed_rpm=v) for v in (lo, hi)]

        def point(x):
            return x, stroke

        def points(end):
            return speed_points(model, here, end)
    else:
        lo, hi = rig.limits.stroke_m[0], max_stroke_m(rig)
        here = stroke
        corners = [model.at(stroke_m=v) for v in (lo, hi)]

        def point(x):
            return speed, x

        def points(end):
            return stroke_points(lo, hi, here, end)
    # before any scan: a point outside limits of, say, 1e-322 m would be walked in steps of them
    if not lo <= here <= hi:
        return Window(axis, None, None, message="the operating point is outside the limits")
    low_points, high_points = points(lo), points(hi)
    probe = Probe(model, equilibrium, point, scan_settings(model, equilibrium, corners + [model]))
    s0 = probe(here)
    if not s0.stable:
        return Window(axis, None, None, evaluations=probe.count,
                      message="unstable at the operating point")
    if axis == "speed" and stroke == 0.0:  # no drive term: this point stands for every speed
        return Window(axis, *rig.limits.speed_rpm, evaluations=probe.count,
                      resolution="not scanned: no stroke", message=STILL_WORDS)
    low, low_edge = _first_edge(probe, here, s0, lo, low_points)
    high, high_edge = _first_edge(probe, here, s0, hi, high_points)
    resolution = (f"scanned every {100 * SPEED_STEP:g}% of speed or {PHASE_STEP:g} of a tongue "
                  "spacing, each local peak searched" if axis == "speed" else
                  f"scanned {STROKE_POINTS} strokes across the range, each local peak searched")
    notes = [note for note, clipped in ((low_note, low == lo and not low_edge),
                                        (high_note, high == hi and not high_edge)) if clipped]
    return Window(axis, low, high, low_edge, high_edge, probe.count, resolution,
                  "; ".join(n for n in notes if n))
