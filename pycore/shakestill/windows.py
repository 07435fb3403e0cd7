"""Speed and stroke windows: how far the operating point may move before stability is lost.

Each side walks away from the operating point and stops at the first edge
(a tongue is never bridged) or at the rig's limit. A narrow tongue can sit
between two stable scan points; every such tongue makes the stability
margin (and, for several links, the closeness of two multipliers) peak
there, so each local peak seen in the scan is searched with Brent's
maximiser before the walk goes on.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .floquet import Settings, Stability, hill_form, stability
from .hill import default_truncation, needed_harmonics
from .properties import properties
from .rig import Rig, max_stroke_m, with_operating_point
from .roots import brentq, golden_max

EDGE_RTOL = 1e-10  # window edges to this relative precision
PHASE_STEP = 0.08  # scan spacing in sqrt(|theta0|) ~ 2 omega0 / omega (tongue n sits near n)
SPEED_STEP = 0.04  # at most this relative change of speed between scan points
STROKE_POINTS = 50  # scan points across the stroke range


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


def scan_settings(rig: Rig, equilibrium: str, corners: list[Rig]) -> Settings:
    """Truncation or steps good enough at every corner of a scan."""
    if rig.n_links == 1:
        rows, kept = 0, 1
        for c in corners:
            form = hill_form(c, equilibrium)
            full_rows = default_truncation(form.theta0, form.theta)
            keep = needed_harmonics(form.theta0, form.theta, full_rows)
            kept = max(kept, keep)
            rows = max(rows, default_truncation(form.theta0, form.theta[:keep]))
        return Settings(truncation=rows, harmonics=kept)
    return Settings()  # several links: steps chosen at each point from its own rates


class _Probe:
    """Stability along one axis with fixed settings; counts evaluations."""

    def __init__(self, rig: Rig, equilibrium: str, axis: str, settings: Settings):
        self.rig, self.equilibrium, self.axis, self.settings = rig, equilibrium, axis, settings
        self.count = 0

    def __call__(self, value: float) -> Stability:
        self.count += 1
        kw = {"speed_rpm": value} if self.axis == "speed" else {"stroke_m": value}
        return stability(self.rig, self.equilibrium, settings=self.settings, verify=False, **kw)


class _Found(Exception):
    """Raised inside a peak search as soon as an unstable point turns up."""

    def __init__(self, value: float, stability: Stability):
        super().__init__(value)
        self.value, self.stability = value, stability


def _closeness(s: Stability) -> float:
    """Minus the smallest gap between two multipliers: collisions precede instability."""
    rhos = s.multipliers
    if len(rhos) < 3:
        return -math.inf  # one link: the margin itself is smooth and sufficient
    return -min(abs(a - b) for i, a in enumerate(rhos) for b in rhos[i + 1:])


def _scan_points(start: float, stop: float, axis: str, rig: Rig, lo: float, hi: float):
    """Scan values from ``start`` towards ``stop`` (exclusive of start, inclusive of stop)."""
    points = []
    direction = 1.0 if stop > start else -1.0
    if axis == "speed":
        # Tongues are evenly spaced in 1/speed; bound the relative step as well.
        f0 = max(properties(rig).hanging_frequencies_hz)
        inv_step = PHASE_STEP / (2.0 * f0 * 60.0)  # d(1/rpm) giving a PHASE_STEP change
        v = start
        while (stop - v) * direction > 0:
            inv = 1.0 / v - direction * inv_step
            by_phase = abs(1.0 / inv - v) if inv > 0 else math.inf
            v = v + direction * min(by_phase, SPEED_STEP * v)
            points.append(min(v, stop) if direction > 0 else max(v, stop))
    else:
        step = (hi - lo) / STROKE_POINTS
        v = start
        while (stop - v) * direction > 0:
            v += direction * step
            points.append(min(v, stop) if direction > 0 else max(v, stop))
    return points


def _walk(probe: _Probe, start: float, s0: Stability, stop: float, points: list[float]):
    """Walk from the stable ``start`` towards ``stop``; return (edge or stop, is_edge)."""
    prev2 = None  # (value, stability) two back
    prev = (start, s0)
    for value in points:
        cur = (value, probe(value))
        if not cur[1].stable:
            return _edge(probe, prev[0], cur[0], prev[1], cur[1]), True
        if prev2 is not None:
            tongue = _peak_search(probe, prev2, prev, cur)
            if tongue is not None:
                return _edge(probe, prev2[0], tongue[0], prev2[1], tongue[1]), True
        prev2, prev = prev, cur
    return stop, False


def _peak_search(probe: _Probe, a, b, c):
    """If the margin or closeness peaks at b, search [a, c] for an unstable point."""
    for key in (lambda s: s.margin, _closeness):
        ka, kb, kc = key(a[1]), key(b[1]), key(c[1])
        if not (math.isfinite(kb) and kb > ka and kb > kc):
            continue
        lo, hi = sorted((a[0], c[0]))

        def f(x: float) -> float:
            s = probe(x)
            if not s.stable:
                raise _Found(x, s)
            return key(s)

        try:
            golden_max(f, lo, hi, xtol=EDGE_RTOL * abs(hi) * 100)
        except _Found as found:
            return found.value, found.stability
    return None


def _edge(probe: _Probe, stable_x: float, unstable_x: float, s_stable: Stability,
          s_unstable: Stability) -> float:
    """The stability edge between a stable and an unstable point."""

    def g(x: float) -> float:
        return probe(x).margin

    fa = min(s_stable.margin, -1e-300)
    fb = max(s_unstable.margin, 1e-300)
    return brentq(g, stable_x, unstable_x, fa=fa, fb=fb,
                  xtol=EDGE_RTOL * max(abs(stable_x), abs(unstable_x)), rtol=EDGE_RTOL)


def window(rig: Rig, equilibrium: str, axis: str, s0: Stability | None = None) -> Window:
    """The speed (rpm) or stroke (m) window of ``equilibrium`` around the operating point."""
    if axis not in ("speed", "stroke"):
        raise ValueError(f"axis: {axis!r} is not 'speed' or 'stroke'")
    if axis == "speed":
        lo, hi = rig.limits.speed_rpm
        lo = max(lo, 1e-6)
        here = rig.drive.speed_rpm
        corners = [with_operating_point(rig, speed_rpm=v) for v in (lo, hi)]
    else:
        lo, hi = rig.limits.stroke_m[0], max_stroke_m(rig)
        here = rig.drive.stroke_m
        corners = [with_operating_point(rig, stroke_m=v) for v in (lo, hi)]
    if not lo <= here <= hi:
        return Window(axis, None, None, message="the operating point is outside the limits")
    settings = scan_settings(rig, equilibrium, corners + [rig])
    probe = _Probe(rig, equilibrium, axis, settings)
    s0 = probe(here)
    if not s0.stable:
        return Window(axis, None, None, evaluations=probe.count,
                      message="unstable at the operating point")
    low, low_edge = _walk(probe, here, s0, lo, _scan_points(here, lo, axis, rig, lo, hi))
    high, high_edge = _walk(probe, here, s0, hi, _scan_points(here, hi, axis, rig, lo, hi))
    resolution = (f"scanned every {100 * SPEED_STEP:g}% of speed or {PHASE_STEP:g} of a tongue "
                  "spacing, each local peak searched" if axis == "speed" else
                  f"scanned {STROKE_POINTS} strokes across the range, each local peak searched")
    return Window(axis, low, high, low_edge, high_edge, probe.count, resolution)
