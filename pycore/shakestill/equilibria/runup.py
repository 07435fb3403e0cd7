"""Run-up and run-down through resonances at the operating stroke.

While the speed ramps at R rpm/s through an interval where an equilibrium
is unstable, a small disturbance grows by the product of the largest Floquet
multiplier over the cycles spent there (frozen-speed, i.e. adiabatic,
approximation: valid when many cycles pass while the speed changes little).
With dN = f dt = (s / 60) ds / R cycles per speed step ds,

    ln(amplification) = (1 / R) * integral of ln(max_multiplier(s)) * s / 60 ds,

so the smallest ramp rate that keeps the amplification below a factor F is
R_min = I / ln F with I the integral at R = 1 rpm/s.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

from ..model import drive as drv
from ..model.derived import Model, as_model
from ..model.linear import EQUILIBRIA
from ..model.rig import OutOfReach, Rig
from .floquet import stability
from .lines import Probe, scan_settings, speed_points, walk
from .ramp import ramp_amplification
from .reach import MAX_SPEED_RPM, scan_floor_rpm

GAUSS_POINTS = 20  # per interval, after the cosine map that absorbs sqrt edge behaviour
LOW_ACCEL_FRACTION = 0.05  # below this peak pivot acceleration (in g) nothing is assumed to grow
DEFAULT_FACTOR = 10.0
MAX_SIMULATED_CYCLES = 20000  # beyond this the ramp is not simulated, only estimated
MAX_LOG_GROWTH = 200.0  # e^200: past this a disturbance is lost anyway; not simulated
LOG_GROWTH_CAP = 700.0  # the frozen estimate stops at e^700 (1.01e304): a double holds it


@lru_cache(maxsize=8)
def gauss_legendre(n: int) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Nodes and weights on [-1, 1] by Newton's method on P_n (Golub-Welsch values agree)."""
    nodes, weights = [], []
    for i in range(1, n + 1):
        x = math.cos(math.pi * (i - 0.25) / (n + 0.5))
        for _ in range(100):
            p0, p1 = 1.0, x
            for k in range(2, n + 1):
                p0, p1 = p1, ((2 * k - 1) * x * p1 - (k - 1) * p0) / k
            dp = n * (x * p1 - p0) / (x * x - 1)
            step = p1 / dp
            x -= step
            if abs(step) < 1e-16:
                break
        nodes.append(x)
        weights.append(2 / ((1 - x * x) * dp * dp))
    return tuple(nodes), tuple(weights)


@dataclass(frozen=True)
class Crossing:
    equilibrium: str
    speed_from_rpm: float
    speed_to_rpm: float
    seconds: float
    amplification: float  # at the given ramp rate
    cycles: float
    peak_multiplier: float
    # keeps this crossing's simulated growth within the factor at this rate and any faster
    # one (tests/test_runup.py: within 1% over it on rates 1x to 1.3x and far above)
    min_rate_rpm_s: float
    simulated_amplification: float | None = None  # linear ramp integrated directly (ramp.py)


def _log_integral(model: Model, equilibrium: str, a: float, b: float, settings) -> tuple[float, float]:
    """(integral of ln max_multiplier * s/60 ds over [a, b], peak multiplier)."""
    nodes, weights = gauss_legendre(GAUSS_POINTS)
    total, peak = 0.0, 0.0
    half = (b - a) / 2
    for x, w in zip(nodes, weights):
        # s = a + (b - a)(1 - cos(theta))/2 with theta = pi (x + 1)/2: sqrt ends become smooth
        theta = math.pi * (x + 1) / 2
        s = a + half * (1 - math.cos(theta))
        ds = half * math.sin(theta) * math.pi / 2
        rho = stability(model, equilibrium, speed_rpm=s, settings=settings, verify=False)
        peak = max(peak, rho.max_multiplier)
        total += w * math.log(rho.max_multiplier) * s / 60 * ds
    return total, peak


def low_speed_floor(rig: Rig) -> float:
    """The speed below which the peak pivot acceleration is under LOW_ACCEL_FRACTION g."""
    per = drv.peak_phase_accel_m(rig.drive)
    if per <= 0:
        return math.inf
    omega = math.sqrt(LOW_ACCEL_FRACTION * rig.g_m_s2 / per)
    return omega * 60 / (2 * math.pi)


@dataclass(frozen=True)
class _Span:
    """An unstable interval met between two speeds: what no ramp rate changes."""

    start_rpm: float
    end_rpm: float
    log_integral: float  # I of the module docstring: ln(amplification) at 1 rpm/s
    peak_multiplier: float


def _spans(model: Model, equilibrium: str, start_rpm: float, end_rpm: float) -> tuple[list[_Span], int]:
    """Unstable intervals met between two speeds at the operating stroke, and evaluations."""
    rig = model.rig
    lo, hi = sorted((start_rpm, end_rpm))
    lo = max(lo, low_speed_floor(rig), scan_floor_rpm(model))
    hi = min(hi, MAX_SPEED_RPM)
    if lo >= hi:
        return [], 0
    stroke = rig.drive.stroke_m
    corners = [model.at(speed_rpm=v) for v in (lo, hi)]
    settings = scan_settings(model, equilibrium, corners)
    probe = Probe(model, equilibrium, lambda x: (x, stroke), settings)
    s0 = probe(lo)
    edges = list(walk(probe, lo, s0, speed_points(model, lo, hi)))
    intervals, open_at = [], None if s0.stable else lo
    for e in edges:
        if not e.gained:
            open_at = e.x
        elif open_at is not None:
            intervals.append((open_at, e.x))
            open_at = None
    if open_at is not None:
        intervals.append((open_at, hi))
    spans = [_Span(a, b, *_log_integral(model, equilibrium, a, b, settings)) for a, b in intervals]
    return spans, probe.count + GAUSS_POINTS * len(intervals)


def _crossing(model: Model, equilibrium: str, span: _Span, rate_rpm_s: float,
              factor: float) -> Crossing:
    """A span crossed at a ramp rate: its frozen and (where feasible) simulated growth."""
    a, b, integral = span.start_rpm, span.end_rpm, span.log_integral
    frozen = math.exp(min(integral / rate_rpm_s, LOG_GROWTH_CAP))
    cycles = (b * b - a * a) / 120.0 / rate_rpm_s
    simulated = (ramp_amplification(model, equilibrium, a, b, rate_rpm_s)
                 if cycles <= MAX_SIMULATED_CYCLES and integral / rate_rpm_s < MAX_LOG_GROWTH
                 else None)
    min_rate = _min_rate(model, equilibrium, a, b, integral, factor)
    return Crossing(equilibrium, a, b, (b - a) / rate_rpm_s, frozen, cycles, span.peak_multiplier,
                    min_rate, simulated)


def crossings(rig: Rig | Model, equilibrium: str, start_rpm: float, end_rpm: float,
              rate_rpm_s: float, factor: float = DEFAULT_FACTOR) -> tuple[list[Crossing], int]:
    """Unstable intervals met between two speeds at the operating stroke, and evaluations."""
    model = as_model(rig)
    spans, count = _spans(model, equilibrium, start_rpm, end_rpm)
    return [_crossing(model, equilibrium, s, rate_rpm_s, factor) for s in spans], count


def _slowest_safe_rate(model: Model, equilibrium: str, spans: list[_Span], factor: float) -> float:
    """The largest of the spans' minimum rates (0 with nothing crossed)."""
    return max((_min_rate(model, equilibrium, s.start_rpm, s.end_rpm, s.log_integral, factor)
                for s in spans), default=0.0)


RATE_STEPS = 8  # simulated ramps spent finding a crossing's minimum rate
RATE_TOLERANCE = 0.02  # the minimum rate's growth lands within 2% under the factor


def _min_rate(model: Model, equilibrium: str, a: float, b: float, integral: float,
              factor: float) -> float:
    """The slowest ramp through [a, b] whose simulated growth is at most ``factor``.

    ln(growth) is nearly I / R + ln(prefactor), a line in 1 / R; secant steps on it from the
    frozen estimate R = I / ln(factor), kept inside the bracket of rates found too slow and
    fast enough. Returns the slowest rate found fast enough: its growth lands within
    RATE_TOLERANCE under the factor; a growth that jumps over that window stops the search
    after RATE_STEPS ramps. Else (no ramp can be simulated) the last rate tried. It depends
    on the crossing alone, not on the rate a run-up is asked at. Faster ramps stay within the
    factor because the growth (ramp.py) is the worst over the drive's phase at both ends in
    a norm matched to each mode's own swing: it falls with the rate, where the growth of one
    ramp in a mismatched norm wobbled by up to 2x through an n = 2 tongue."""
    if integral <= 0:
        return 0.0
    target = math.log(factor)
    guess = integral / target
    points: list[tuple[float, float]] = []
    slow, fast = 0.0, math.inf  # fastest rate found too slow, slowest found fast enough
    for _ in range(RATE_STEPS):
        cycles = (b * b - a * a) / 120.0 / guess
        if cycles > MAX_SIMULATED_CYCLES or integral / guess >= MAX_LOG_GROWTH:
            break
        growth = math.log(ramp_amplification(model, equilibrium, a, b, guess))
        points.append((1 / guess, growth))
        if growth <= target:
            fast = min(fast, guess)
            if growth >= target - math.log1p(RATE_TOLERANCE):
                break
        else:
            slow = max(slow, guess)
        (x0, y0), (x1, y1) = points[-2:] if len(points) > 1 else ((0.0, 0.0), points[-1])
        slope = (y1 - y0) / (x1 - x0) if x1 != x0 and y1 != y0 else integral
        x = x1 + (target - math.log1p(RATE_TOLERANCE / 2) - y1) / slope
        low_x, high_x = 1 / fast if fast < math.inf else 0.0, 1 / slow if slow > 0 else math.inf
        if not low_x < x < high_x:  # outside the bracket: bisect it (in 1 / R)
            x = (low_x + high_x) / 2 if high_x < math.inf else 2 * x1
        guess = 1 / x
    return fast if fast < math.inf else guess


def _checked_span(model: Model, factor: float, start_rpm: float, end_rpm: float | None) -> float:
    """The run-up's end speed (default: the operating speed) once the factor and speeds are
    allowed; else a ValueError naming them."""
    if not (factor > 1 and math.isfinite(factor)):
        raise ValueError(f"factor: {factor!r} must be a finite number above 1")
    end = model.rig.drive.speed_rpm if end_rpm is None else end_rpm
    if not (start_rpm >= 0 and end > 0):
        raise ValueError("start_rpm and end_rpm: speeds must be at least 0 rpm")
    return end


class NoRateToRecommend(ValueError):
    """A run-up asked without a rate where none can be recommended."""


def runup(rig: Rig | Model, *, rate_rpm_s: float | None, start_rpm: float = 0.0,
          end_rpm: float | None = None, factor: float = DEFAULT_FACTOR,
          equilibria=EQUILIBRIA) -> dict:
    """Run-up from ``start_rpm`` to ``end_rpm`` (default: the operating speed) and the
    run-down back; plain data for JSON and the page. With ``rate_rpm_s`` None the ramp runs
    at the slowest rate that keeps the hanging pendulum's growth through every crossing
    under the factor (it rests hanging while the drive runs up and is raised once at speed);
    NoRateToRecommend says why there is none."""
    if rate_rpm_s is not None and not (rate_rpm_s > 0 and math.isfinite(rate_rpm_s)):
        raise ValueError(f"rate_rpm_s: {rate_rpm_s!r} must be a finite number above 0 rpm/s")
    model = as_model(rig)
    rig = model.rig
    end = _checked_span(model, factor, start_rpm, end_rpm)
    spans = {eq: _spans(model, eq, start_rpm, end) for eq in equilibria}
    recommended = rate_rpm_s is None
    if recommended:
        hanging, _ = spans["hanging"] if "hanging" in spans else _spans(model, "hanging",
                                                                         start_rpm, end)
        rate_rpm_s = _slowest_safe_rate(model, "hanging", hanging, factor)
        if not 0 < rate_rpm_s < math.inf:
            raise NoRateToRecommend(
                "no resonance of the hanging pendulum is crossed (any rate will do): give a rate"
                if rate_rpm_s == 0 else
                "no ramp rate keeps the growth under the factor: give a rate to see the crossings")
    result = {"rate_rpm_s": rate_rpm_s, "factor": factor, "start_rpm": start_rpm,
              "end_rpm": end, "stroke_m": rig.drive.stroke_m,
              "low_speed_floor_rpm": low_speed_floor(rig), "evaluations": 0,
              "note": ("frozen-speed (adiabatic) estimate: the product of the largest Floquet "
                       "multiplier over the cycles spent in each unstable interval; below the "
                       "low-speed floor the pivot's peak acceleration is under "
                       f"{LOW_ACCEL_FRACTION:g} g and nothing is taken to grow; the simulated "
                       "growth is the ramp's own, the worst over the drive's phase as it enters "
                       "and leaves, with a disturbance sized by each sway mode's angle and rate "
                       "over the mode's own frequency"),
              "rate_recommended": recommended}
    for eq in equilibria:
        eq_spans, count = spans[eq]
        found = [_crossing(model, eq, s, rate_rpm_s, factor) for s in eq_spans]
        # held at the end speed? Known where a crossing runs to it; else one verdict there
        # (a ramp wholly below the low-speed floor crosses nothing, yet the upright
        # pendulum falls at every speed of it)
        end_rho = None
        if found and found[-1].speed_to_rpm >= end:
            held = False
        else:
            try:
                at_end = stability(model, eq, speed_rpm=end)
                held, end_rho = at_end.stable, at_end.max_multiplier
            except OutOfReach:  # an end speed the method cannot resolve: not known
                held = None
            count += 1
        result["evaluations"] += count
        items = [c.__dict__ for c in found]
        result[eq] = {
            "crossings": items,
            "total_amplification": math.prod(c.amplification for c in found) if found else 1.0,
            "rundown": "the run-down passes the same intervals in reverse: at the same rate "
                       "the same amplification",
            "min_rate_rpm_s": max((c.min_rate_rpm_s for c in found), default=0.0),
            "held_at_end": held,
            "ok": held is not False and all((c.simulated_amplification or c.amplification)
                                            <= factor for c in found),
        }
        if end_rho is not None and not held:
            result[eq]["end_max_multiplier"] = end_rho
    return result


def recommended_rate(rig: Rig | Model, *, start_rpm: float = 0.0,
                     end_rpm: float | None = None, factor: float = DEFAULT_FACTOR,
                     equilibria=EQUILIBRIA) -> float:
    """The smallest ramp rate (rpm/s) keeping every crossing's growth under ``factor``: the
    largest of the crossings' minimum rates (each found by simulated ramps). 0 when nothing
    is crossed."""
    model = as_model(rig)
    end = _checked_span(model, factor, start_rpm, end_rpm)
    return max((_slowest_safe_rate(model, eq, _spans(model, eq, start_rpm, end)[0], factor)
                for eq in equilibria), default=0.0)
