"""Drive speed against time: constant, ramps (up, down, stop) or a measured table.

A profile is piecewise linear in time through (t, rpm) knots and held
constant before the first and after the last knot. The phase is the exact
integral of the speed (piecewise quadratic), so a ramp changes the pivot's
acceleration by y'(phase) * alpha as well as by the speed squared.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

from .dynamics import Segment
from ..model.rig import Problem, RigError

RAD_S_PER_RPM = 2.0 * math.pi / 60.0
MAX_KNOTS = 100_000  # a measured table longer than this is not a speed log
PHASE_SLACK = 1e-9  # cycles: a target this close behind the segment start counts as at it


@dataclass(frozen=True)
class SpeedProfile:
    """Piecewise-linear speed through (times_s[i], speeds_rpm[i]); held outside the knots."""

    times_s: tuple[float, ...]
    speeds_rpm: tuple[float, ...]

    def speed_rpm(self, t: float) -> float:
        ts, vs = self.times_s, self.speeds_rpm
        if t <= ts[0]:
            return vs[0]
        if t >= ts[-1]:
            return vs[-1]
        lo, hi = 0, len(ts) - 1
        while hi - lo > 1:
            mid = (lo + hi) // 2
            if ts[mid] <= t:
                lo = mid
            else:
                hi = mid
        return vs[lo] + (vs[hi] - vs[lo]) * (t - ts[lo]) / (ts[hi] - ts[lo])


def constant_speed(speed_rpm: float) -> SpeedProfile:
    return table_profile((0.0,), (speed_rpm,), where="speed_rpm")


def ramp_profile(start_rpm: float, ramps: Sequence[tuple[float, float, float]],
                 where: str = "ramps") -> SpeedProfile:
    """Start at ``start_rpm``; each ramp (at_s, over_s, to_rpm) runs linearly to its speed.

    A stop is a ramp to 0 rpm. Ramps must follow one another without overlap.
    """
    problems = []
    times, speeds = [0.0], [float(start_rpm)]
    for i, ramp in enumerate(ramps):
        at, over, to = (float(x) for x in ramp)
        here = f"{where}[{i}]"
        if not (math.isfinite(at) and at >= times[-1]):
            problems.append(Problem(here, f"starts at {at:g} s: a ramp starts at or after "
                                          f"{times[-1]:g} s (the end of the one before)"))
            continue
        if not (math.isfinite(over) and over > 0):
            problems.append(Problem(here, f"lasts {over:g} s: a ramp lasts more than 0 s (an "
                                          "instant speed change would need infinite torque)"))
            continue
        if at > times[-1]:
            times.append(at)
            speeds.append(speeds[-1])
        times.append(at + over)
        speeds.append(to)
    if problems:
        raise RigError(problems)
    return table_profile(times, speeds, where=where)


def table_profile(times_s: Sequence[float], speeds_rpm: Sequence[float],
                  where: str = "speed_table") -> SpeedProfile:
    """A measured speed-versus-time table (seconds, rpm), linear between rows."""
    problems = []
    ts, vs = [float(t) for t in times_s], [float(v) for v in speeds_rpm]
    if not ts or len(ts) != len(vs):
        problems.append(Problem(where, f"{len(ts)} times and {len(vs)} speeds: give one speed per "
                                       "time, at least one row"))
    elif len(ts) > MAX_KNOTS:
        problems.append(Problem(where, f"{len(ts)} rows: at most {MAX_KNOTS} are allowed"))
    for i, (t, v) in enumerate(zip(ts, vs)):
        if not math.isfinite(t) or (i and not t > ts[i - 1]):
            problems.append(Problem(f"{where}[{i}]", f"time {t:g} s is not allowed: times must "
                                                     "be finite and increase row by row"))
        if not (math.isfinite(v) and v >= 0):
            problems.append(Problem(f"{where}[{i}]", f"speed {v:g} rpm is not allowed: speeds "
                                                     "are finite and at least 0 rpm"))
    if problems:
        raise RigError(problems[:20])
    return SpeedProfile(tuple(ts), tuple(vs))


def segments(profile: SpeedProfile, t_end: float, breaks: Sequence[float] = ()
             ) -> list[tuple[Segment, float]]:
    """(segment, end time) pieces covering [0, t_end], split at knots and at ``breaks``.

    The phase is 0 at t = 0.
    """
    cuts = sorted({0.0, t_end} | {t for t in profile.times_s if 0 < t < t_end}
                  | {t for t in breaks if 0 < t < t_end})
    out = []
    phase = 0.0
    for ta, tb in zip(cuts, cuts[1:]):
        wa = profile.speed_rpm(ta) * RAD_S_PER_RPM
        wb = profile.speed_rpm(tb) * RAD_S_PER_RPM
        alpha = (wb - wa) / (tb - ta)
        out.append((Segment(ta, phase, wa, alpha), tb))
        phase += 0.5 * (wa + wb) * (tb - ta)  # exact: the speed is linear in between
    return out


def phase_times(seg: Segment, t_end: float, phase_rad: float) -> list[tuple[float, int]]:
    """(t, k) with phase(t) = phase_rad + 2 pi k, for t in [seg.t0, t_end).

    k counts cycles from t = 0, so a time found at the end of one segment and
    again at the start of the next is recognised as the same sample.
    """
    two_pi = 2.0 * math.pi
    k = math.ceil((seg.phase0 - phase_rad) / two_pi - PHASE_SLACK)
    out = []
    while True:
        gap = max(0.0, phase_rad + two_pi * k - seg.phase0)  # phase still to go
        disc = seg.omega0 ** 2 + 2.0 * seg.alpha * gap
        if disc < 0:
            break
        denom = seg.omega0 + math.sqrt(disc)
        if gap > 0 and denom <= 0:
            break
        # the root of phase(t) = target, cancellation-free; a target at the start is the start,
        # also when the drive starts from rest (denom 0)
        t = seg.t0 + (2.0 * gap / denom if gap > 0 else 0.0)
        if t >= t_end:
            break
        out.append((t, k))
        k += 1
    return out
