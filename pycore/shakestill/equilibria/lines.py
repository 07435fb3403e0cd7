"""Stability edges along a line in the (speed, stroke) plane: the shared engine of windows,
charts and run-ups.

A line is walked through scan points. Where the verdict flips between two
points, Brent's method on the stability margin finds the edge. A tongue (or
a stable island) narrower than the scan spacing makes the margin (and, for
several links, the closeness of two multipliers) peak between the points,
so every local peak is searched with Brent's maximiser before moving on.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Iterator

from .cycle import (CYCLE_PHASE, DRIVE_SERIES_TOLERANCE, HARMONIC_STEPS, MIN_STEPS, STEP_PHASE,
                    default_steps)
from .floquet import Settings, Stability, hill_form, mode_forms, modes_decouple, stability
from ..numerics.hill import default_truncation, needed_harmonics
from ..model.derived import Model, as_model
from ..model.rig import Rig
from ..numerics.roots import brentq, golden_max
from .reach import MAX_CYCLE_STEPS, MAX_EVALUATIONS, too_much_work

EDGE_RTOL = 1e-10  # edges to this relative precision
PHASE_STEP = 0.08  # scan spacing in sqrt(|theta0|) ~ 2 f0 / f (tongue n sits near n)
SPEED_STEP = 0.04  # at most this relative change of speed between scan points
STROKE_POINTS = 50  # scan points across a stroke range
PEAK_FLOOR = 1e-12  # relative rise that counts as a peak (well above round-off)
# A margin that peaks towards a line's first or last point has no neighbour beyond it to
# show the peak: the interval next to that end is halved this many times towards it, each
# middle tried as a peak (a tongue 3.5% above a chart row's start, between it and the first
# scan point 8% up, was missed before: 2026-12-05, against solve_ivp).
END_HALVINGS = 2
# Cost model of one link's two exact methods (microseconds, measured on CPython 3.11; only
# the ratio matters): Hill's band LU with more than one harmonic per entry of its band, the
# fixed RK cycle per step. A scan takes the cheaper one (a sine keeps Hill's tridiagonal form).
# These figures are DOP853's; the 2 x 2 cycle is now floquet's Magnus trace, whose step the
# chart prices itself (chart_rows.CHART_RK_STEP_US). Other scans keep 12: re-priced 2026-12-05
# (bench_plan's one-link crank plan, load ~1-2) 6 / 9 / 16 / 24 took 1.01 / 0.97 / 0.67 /
# 1.53 s against 12's 0.64 s, and a one-link crank check at 9 took 0.039 s against 0.019 s
# (a scan's cycle also pays its stage accelerations at every new stroke, which the bare
# step, 1.6-1.7 us against 0.03-0.09 us a band unit, leaves out). test_scan_settings pins both.
HILL_BAND_US = 0.25
RK_STEP_US = 12.0


@dataclass(frozen=True)
class Edge:
    """Where a line crosses a stability boundary."""

    x: float
    gained: bool  # True if the equilibrium becomes stable moving up the line


def scan_settings(model: Model, equilibrium: str, corners: list[Model], *,
                  step_phase: float = STEP_PHASE, min_steps: int = MIN_STEPS,
                  per_harmonic: float = HARMONIC_STEPS, modal: bool | None = None,
                  step_us: float = RK_STEP_US, cycle_phase: float = CYCLE_PHASE,
                  drive_tolerance: float = DRIVE_SERIES_TOLERANCE) -> Settings:
    """Numerical settings good enough at every corner of a scan: Hill rows and harmonics
    (one link, or each sway mode of several), or fixed RK steps. Several links are taken by
    their modes where that is exact (``modes_decouple``), or where ``modal`` asks for it as
    a predictor; else the chain's Taylor steps are chosen at each point from its own rates
    (``cycle_phase`` and ``drive_tolerance``: see chain_steps). ``step_phase``, ``min_steps``
    and ``per_harmonic`` size the RK steps of the 2 x 2 cycles (see default_steps);
    ``step_us`` prices one of them against Hill's band (HILL_BAND_US)."""
    several = model.rig.n_links > 1
    if modal is None:
        modal = several and modes_decouple(model)
    if several and not modal:
        return Settings(cycle_phase=cycle_phase, drive_tolerance=drive_tolerance)
    forms = [f for c in corners
             for f in (mode_forms(c, equilibrium) if several else (hill_form(c, equilibrium),))]
    steps = None
    if any(len(f.theta) > 1 for f in forms):
        steps = max(default_steps(c, equilibrium, step_phase=step_phase, min_steps=min_steps,
                                  per_harmonic=per_harmonic) for c in corners)
    rows, kept = 0, 1
    for form in forms:
        most = _affordable_harmonics(form, steps, step_us)
        keep = needed_harmonics(form.theta0, form.theta,
                                default_truncation(form.theta0, form.theta), most=most)
        if keep is None:  # each link or mode by its 2 x 2 monodromy
            return Settings(steps=steps, method="modal" if several else "monodromy")
        kept = max(kept, keep)
        rows = max(rows, default_truncation(form.theta0, form.theta[:keep]))
    return Settings(truncation=rows, harmonics=kept, method="modal" if several else None)


def _affordable_harmonics(form, steps: int | None, step_us: float = RK_STEP_US) -> int:
    """The most harmonics for which Hill's band LU costs less than an RK cycle of ``steps``
    (one harmonic always: Hill's tridiagonal form is the cheapest of all); every harmonic
    with no RK cycle to compare (``steps`` None: a drive of one harmonic)."""
    if steps is None:
        return len(form.theta)
    keep = 1
    while keep < len(form.theta):
        rows = default_truncation(form.theta0, form.theta[:keep + 1])
        if HILL_BAND_US * (2 * rows + 1) * (2 * keep + 3) ** 2 > step_us * steps:
            break
        keep += 1
    return keep


class Probe:
    """Stability at points x of a line x -> (speed_rpm, stroke_m); counts evaluations.

    Every point moves the one derived model (``Model.at``): the links' part is shared."""

    def __init__(self, model: Model, equilibrium: str, point: Callable[[float], tuple],
                 settings: Settings):
        self.model, self.equilibrium, self.point = model, equilibrium, point
        self.settings = settings
        self.count = 0
        self.steps = 0  # integration steps of the monodromies taken on this line

    def __call__(self, x: float) -> Stability:
        self.count += 1
        if self.count > MAX_EVALUATIONS:
            raise too_much_work("limits", f"{MAX_EVALUATIONS} stability evaluations")
        speed, stroke = self.point(x)
        s = stability(self.model, self.equilibrium, speed_rpm=speed, stroke_m=stroke,
                      settings=self.settings, verify=False)
        self.steps += s.work.get("steps", 0)
        if self.steps > MAX_CYCLE_STEPS:
            raise too_much_work("limits",
                                f"{MAX_CYCLE_STEPS} integration steps of the monodromy")
        return s


def speed_points(model: Rig | Model, start: float, stop: float, *, step: float = SPEED_STEP) -> list[float]:
    """Speeds from ``start`` towards ``stop`` (start excluded, stop included): tongues are
    evenly spaced in 1/speed, and the relative step is bounded as well."""
    points = []
    direction = 1.0 if stop > start else -1.0
    f0 = max(as_model(model).properties.hanging_frequencies_hz)
    inv_step = PHASE_STEP / (2.0 * f0 * 60.0)  # d(1/rpm) giving a PHASE_STEP change
    v = start
    while (stop - v) * direction > 0:
        inv = 1.0 / v - direction * inv_step
        by_phase = abs(1.0 / inv - v) if inv > 0 else math.inf
        v = v + direction * min(by_phase, step * v)
        points.append(min(v, stop) if direction > 0 else max(v, stop))
    return points


def stroke_points(lo: float, hi: float, start: float, stop: float) -> list[float]:
    """Strokes from ``start`` towards ``stop`` (start excluded, stop included), STROKE_POINTS
    across the range [lo, hi]; never more than STROKE_POINTS + 2 (the steps, the last of
    which may fall short of ``stop``, and ``stop`` itself), whatever the numbers."""
    step = (hi - lo) / STROKE_POINTS
    direction = 1.0 if stop > start else -1.0
    points, v = [], start
    while (stop - v) * direction > 0 and len(points) <= STROKE_POINTS:
        v = v + direction * step if step > 0 else stop
        points.append(min(v, stop) if direction > 0 else max(v, stop))
    if points and points[-1] != stop:
        points.append(stop)
    return points


class _Found(Exception):
    """Raised inside a peak search as soon as a point of the other verdict turns up."""

    def __init__(self, x: float, s: Stability):
        super().__init__(x)
        self.x, self.s = x, s


def _closeness(s: Stability) -> float:
    """Minus the smallest gap between two multipliers: collisions precede instability."""
    rhos = s.multipliers
    if len(rhos) < 3:
        return -math.inf  # one link: the margin is smooth and sufficient
    return -min(abs(a - b) for i, a in enumerate(rhos) for b in rhos[i + 1:])


def _hidden_point(probe: Probe, a, b, c, rtol: float):
    """If a, b, c share a verdict and the margin peaks towards the other verdict at b,
    search [a, c] for a point of the other verdict; return it or None."""
    stable = b[1].stable
    keys = ((lambda s: s.margin), _closeness) if stable else ((lambda s: -s.margin),)
    for key in keys:
        ka, kb, kc = key(a[1]), key(b[1]), key(c[1])
        # a peak must stand above round-off, or two platforms (CPython, Pyodide) could
        # disagree on whether to search
        if not (math.isfinite(kb) and kb - max(ka, kc) > PEAK_FLOOR * (1.0 + abs(kb))):
            continue
        lo, hi = sorted((a[0], c[0]))

        def f(x: float) -> float:
            s = probe(x)
            if s.stable != stable:
                raise _Found(x, s)
            return key(s)

        try:
            golden_max(f, lo, hi, xtol=rtol * max(abs(lo), abs(hi)) * 100)
        except _Found as found:
            return found.x, found.s
    return None


def edge_between(probe: Probe, a, b, *, rtol: float = EDGE_RTOL) -> Edge:
    """The edge between points a and b (each (x, Stability)) of different verdicts."""
    fa = min(a[1].margin, -1e-300) if a[1].stable else max(a[1].margin, 1e-300)
    fb = min(b[1].margin, -1e-300) if b[1].stable else max(b[1].margin, 1e-300)
    x = brentq(lambda v: probe(v).margin, a[0], b[0], fa=fa, fb=fb,
               xtol=rtol * max(abs(a[0]), abs(b[0])), rtol=rtol)
    gained = b[1].stable if b[0] > a[0] else a[1].stable
    return Edge(x, gained)


def _end_point(probe: Probe, end, inner, rtol: float):
    """If the margin of ``end`` and ``inner`` (one verdict) peaks towards the line's end
    point ``end``, a point of the other verdict between them, or None: the interval is
    halved END_HALVINGS times towards ``end``, each middle tried as a peak there."""
    sign = 1.0 if end[1].stable else -1.0
    for _ in range(END_HALVINGS):
        if not sign * end[1].margin > sign * inner[1].margin:
            return None
        x = (end[0] * inner[0]) ** 0.5 if end[0] * inner[0] > 0 else 0.5 * (end[0] + inner[0])
        middle = (x, probe(x))
        if middle[1].stable != end[1].stable:
            return middle
        hidden = _hidden_point(probe, end, middle, inner, rtol)
        if hidden is not None:
            return hidden
        inner = middle
    return None


def _split(probe: Probe, a, hidden, b, rtol: float) -> list[Edge]:
    """The two edges about a point ``hidden`` of the other verdict between a and b, in
    walking order from a."""
    edges = (edge_between(probe, a, hidden, rtol=rtol), edge_between(probe, hidden, b, rtol=rtol))
    return sorted(edges, key=lambda e: abs(e.x - a[0]))


def walk(probe: Probe, start: float, s0: Stability, points: list[float], *,
         rtol: float = EDGE_RTOL) -> Iterator[Edge]:
    """Every edge met walking from ``start`` through ``points``, in walking order."""
    prev2, prev = None, (start, s0)
    for k, x in enumerate(points):
        cur = (x, probe(x))
        if cur[1].stable != prev[1].stable:
            yield edge_between(probe, prev, cur, rtol=rtol)
            prev2 = None
        else:
            if prev2 is not None:
                hidden = _hidden_point(probe, prev2, prev, cur, rtol)
                first = prev2
            else:
                hidden = _end_point(probe, prev, cur, rtol) if k == 0 else None
                first = prev
            if hidden is not None:
                yield from _split(probe, first, hidden, cur, rtol)
                prev2 = None
            else:
                prev2 = prev
        prev = cur
    if prev2 is not None:  # the last point: a peak towards it has no neighbour beyond
        hidden = _end_point(probe, prev, prev2, rtol)
        if hidden is not None:
            yield from _split(probe, prev2, hidden, prev, rtol)
