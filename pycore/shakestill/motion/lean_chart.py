"""The lean chart: the held orbit's mean lean against the drive's tilt, and against speed at
the operating stroke and tilt.

Each curve is walked by natural continuation: the orbit found at one point starts Newton
at the next (``orbit.solve_orbit``, loose), so a 60-point sweep costs about one loose
solve per point. A branch is not walked past the point where its orbit is lost (Newton
fails: the lean has run away) or unstable: the pendulum holds no orbit there. The points past
it are null and the curve's ``ends`` say where and why (low end, high end). The speed curve walks down and up from
the operating speed, so each side stops at its own fold.

The Kapitza estimate beside the curves is the small-tilt slope of the effective potential
(Landau & Lifshitz, Mechanics, section 30, with the pivot's line tilted):
lean / tilt = kappa / (kappa - 1) inverted, kappa / (kappa + 1) hanging,
kappa = (A omega)^2 / (2 g l_eq), A half the stroke.
"""

from __future__ import annotations

import math
from dataclasses import replace

from ..equilibria.estimates import estimates
from ..model.linear import EQUILIBRIA
from ..model.rig import MAX_TILT_DEG, Rig, with_operating_point
from .orbit import orbit_steps, search_steps, solve_orbit

DEFAULT_TILTS = 61  # points on the tilt axis, 0 included
DEFAULT_SPEEDS = 41  # points on the speed axis, across the speed limits
MAX_POINTS = 401  # per axis: a finer chart shows nothing more and costs seconds per 60
DEFAULT_TILT_SPAN_DEG = 5.0  # without a tilt set: a misalignment a builder may live with
SPEED_TILT_DEG = 1.0  # the speed curve's tilt when the rig's drive is vertical


def default_max_tilt(rig: Rig) -> float:
    """The tilt axis: 0 to twice the rig's tilt, at least 5 deg, at most 90."""
    return min(MAX_TILT_DEG, max(DEFAULT_TILT_SPAN_DEG, 2.0 * abs(rig.drive.axis_tilt_deg)))


def _slopes(rig: Rig) -> dict:
    """The averaging's lean per degree of tilt, or None where it has no held position."""
    est = estimates(rig)
    amp, omega = rig.drive.stroke_m / 2.0, 2.0 * math.pi * rig.drive.frequency_hz
    kappa = (amp * omega) ** 2 / (2.0 * rig.g_m_s2 * est.l_eq_m)
    return {"kappa": kappa,
            "inverted": kappa / (kappa - 1.0) if kappa > 1.0 else None,
            "hanging": kappa / (kappa + 1.0)}


def _walk(rig: Rig, name: str, points, move, steps: tuple[int, int], end: dict):
    """Yields (lean_deg, wobble_deg, stable) along ``points``; ``move(rig, value)`` is the rig
    at one point; ``steps`` (Newton's, the reading's: ``_steps``). The walk stops where the
    orbit is lost or unstable (the pendulum holds no orbit there), noting it in ``end``; the
    points past it are None."""
    start = None
    for value in points:
        if end:
            yield None, None, None
            continue
        o = solve_orbit(move(rig, value), name, start=start, steps=steps[0], verify=False,
                        read_steps=steps[1])
        if not o.stable:
            end.update(at=value, why="unstable" if o.found else "lost")
            yield None, None, None
            continue
        start = o.start
        yield ([math.degrees(v) for v in o.lean_rad], [math.degrees(v) for v in o.wobble_rad],
               True)


def _steps(rig: Rig, name: str, steps: int) -> tuple[int, int]:
    """(Newton's steps, the reading's): Newton on the fewest steps that keep the held
    orbit's cycle at the rig's tilt (``SPEED_TILT_DEG`` when vertical: at no tilt the orbit
    is the equilibrium, exact at any step count) within ``orbit.SEARCH_ERROR``; lean and
    wobble read at ``steps``."""
    at = _tilted(rig, rig.drive.axis_tilt_deg or SPEED_TILT_DEG)
    o = solve_orbit(at, name, steps=steps, verify=False)
    return (search_steps(at, replace(o, steps=steps)) if o.found else steps), steps


def _tilted(rig: Rig, tilt: float) -> Rig:
    return replace(rig, drive=replace(rig.drive, axis_tilt_deg=tilt))


def _at_speed(rig: Rig, speed: float) -> Rig:
    return with_operating_point(rig, speed_rpm=speed)


def _speed_axis(rig: Rig, count: int) -> tuple[list[float], int]:
    """Speeds across the limits with the operating speed among them, and its index."""
    lo, hi = rig.limits.speed_rpm
    op = min(max(rig.drive.speed_rpm, lo), hi)
    speeds = sorted({lo + (hi - lo) * k / (count - 1) for k in range(count)} | {op})
    return speeds, speeds.index(op)


def _curve(items, ends) -> dict:
    items = list(items)
    return {"lean_deg": [i[0] for i in items], "wobble_deg": [i[1] for i in items],
            "ends": [e or None for e in ends]}


def lean_chart_steps(rig: Rig, *, max_tilt_deg: float | None = None,
                     tilts: int = DEFAULT_TILTS, speeds: int = DEFAULT_SPEEDS):
    """Yields the fraction done; returns the chart (``lean_chart``'s dict)."""
    for what, count in (("tilts", tilts), ("speeds", speeds)):
        if isinstance(count, bool) or not isinstance(count, int) or not 3 <= count <= MAX_POINTS:
            raise ValueError(f"{what}: {count!r} is not allowed: 3 to {MAX_POINTS} points")
    top = default_max_tilt(rig) if max_tilt_deg is None else float(max_tilt_deg)
    if not 0.0 < top <= MAX_TILT_DEG:
        raise ValueError(f"max_tilt_deg: {top!r} is not allowed: above 0, up to "
                         f"{MAX_TILT_DEG:g} deg")
    tilt_axis = [top * k / (tilts - 1) for k in range(tilts)]
    speed_tilt = rig.drive.axis_tilt_deg or SPEED_TILT_DEG
    speed_axis, op_index = _speed_axis(rig, speeds)
    total, done = 2 * (tilts + len(speed_axis) + 1), 0  # both speed walks start at the op
    out = {"links": rig.n_links, "tilt_deg": tilt_axis, "speed_rpm": speed_axis, "speed_tilt_deg": speed_tilt,
           "stroke_m": rig.drive.stroke_m, "operating_speed_rpm": rig.drive.speed_rpm,
           "operating_tilt_deg": rig.drive.axis_tilt_deg,
           "side_stroke_m": rig.drive.side_stroke_m,
           "estimate": _slopes(rig), "by_tilt": {}, "by_speed": {}}
    for name in EQUILIBRIA:
        steps = _steps(rig, name, orbit_steps(rig, name))
        items, end = [], {}
        for item in _walk(rig, name, tilt_axis, _tilted, steps, end):
            items.append(item)
            done += 1
            yield done / total
        out["by_tilt"][name] = _curve(items, [None, end])
        base = _tilted(rig, speed_tilt)
        # the step count of the fastest speed on the axis holds for the slower ones
        fastest = orbit_steps(_at_speed(rig, speed_axis[-1]), name)
        steps = (max(steps[0], fastest // (steps[1] // steps[0])), max(steps[1], fastest))
        sides = []  # from the operating speed outwards, each side its own walk
        for points in (speed_axis[op_index::-1], speed_axis[op_index:]):
            items, end = [], {}
            for item in _walk(base, name, points, _at_speed, steps, end):
                items.append(item)
                done += 1
                yield done / total
            sides.append((items, end))
        (down, low_end), (up, high_end) = sides
        out["by_speed"][name] = _curve(down[::-1] + up[1:], [low_end, high_end])
    return out


def lean_chart(rig: Rig, **options) -> dict:
    """The lean chart as plain data (module docstring); ``options`` as ``lean_chart_steps``."""
    steps = lean_chart_steps(rig, **options)
    while True:
        try:
            next(steps)
        except StopIteration as stop:
            return stop.value
