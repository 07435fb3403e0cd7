"""The check with the drive off vertical: the held orbit's lean, wobble and stability, its
windows, and the tilt a rig tolerates.

``check(rig)`` is the check of ``equilibria.check`` for a vertical drive, byte for
byte, when the rig file gives none of ``drive.axis_tilt_deg``, ``side_stroke_m``,
``side_phase_deg``. With any of them given each equilibrium gains ``lean_deg`` and
``wobble_deg`` (per link), and the top level ``tilt_tolerance_deg``; off vertical the
equilibrium's multipliers, stability and windows are those of the held orbit
(``orbit``). On an exactly vertical path the orbit is the equilibrium, so the
vertical numbers (Hill's determinant for one link) are kept as they are.

Windows of the orbit (bounded cost): the vertical windows are found first; each
end that is an edge is then moved to where the orbit loses stability or ceases
to exist, searched from the vertical edge in steps of ``EDGE_STEP`` (at most
``EDGE_PROBES`` of them) and bisected to ``EDGE_RTOL``. An orbit edge further
than that from the vertical one is reported at the last probe, with a message.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import replace

from ..equilibria.check import check as vertical_check
from ..model.linear import EQUILIBRIA
from ..model.rig import Rig, with_operating_point
from .bracket import Point, close
from .orbit import (MIN_SEARCH_STEPS, Orbit, held_orbit, is_damped, orbit_steps, search_steps,
                    solve_orbit, steps_hold)

DEFAULT_MAX_LEAN_DEG = 5.0  # issue 15: the lean a rig builder accepts unless told otherwise
TILT_FIELDS = ("axis_tilt_deg", "side_stroke_m", "side_phase_deg")
EDGE_STEP = 0.02  # relative step of the probes around a vertical window edge
EDGE_PROBES = 6  # probes each way before the search stops (bounds the check's time)
EDGE_RTOL = 1e-4  # relative precision of an orbit window edge
MAX_TOLERANCE_DEG = 90.0  # the largest tilt the rig file allows
TOLERANCE_TOL_DEG = 1e-3  # precision of the tilt tolerance


def wants_orbit(rig: Rig) -> bool:
    """True when the rig file gives any of the drive's off-vertical fields."""
    return any(k in rig.drive.given for k in TILT_FIELDS) or rig.drive.off_vertical


def check(rig: Rig, *, max_lean_deg: float | None = None) -> dict:
    """The check JSON; with a tilt set, of the held orbits (module docstring)."""
    result = vertical_check(rig)
    if not wants_orbit(rig):
        return result
    limit = max_lean_deg or rig.limits.max_lean_deg or DEFAULT_MAX_LEAN_DEG
    for name in EQUILIBRIA:
        entry = result[name]
        orbit = held_orbit(rig, name)
        entry["lean_deg"] = [math.degrees(v) for v in orbit.lean_rad] if orbit.found else None
        entry["wobble_deg"] = [math.degrees(v) for v in orbit.wobble_rad] if orbit.found else None
        entry["orbit"] = {"found": orbit.found, "converged": orbit.converged,
                          "iterations": orbit.iterations, "steps": orbit.steps,
                          "error_estimate": orbit.error_estimate}
        if orbit.message:
            entry["messages"].append(orbit.message)
        if rig.drive.off_vertical:
            _use_orbit(rig, name, entry, orbit)
    tol = tilt_tolerance(rig, max_lean_deg=limit)
    result["tilt_tolerance_deg"] = tol["tilt_tolerance_deg"]
    result["tilt_tolerance"] = tol
    result["converged"] = all(result[n]["converged"] for n in EQUILIBRIA)
    return result


def held_windows(rig: Rig) -> dict:
    """Per equilibrium, the held orbit's verdict and windows through the operating point (the
    check's, off vertical), for drawing on the vertical drive's stability map."""
    result = check(rig)
    return {name: {"stable": result[name]["stable"], "lean_deg": result[name]["lean_deg"],
                   "speed_window_rpm": result[name]["speed_window_rpm"],
                   "stroke_window_m": result[name]["stroke_window_m"]} for name in EQUILIBRIA}


def _use_orbit(rig: Rig, name: str, entry: dict, orbit: Orbit) -> None:
    """The equilibrium's verdict, multipliers and windows become the orbit's."""
    entry["stable"] = orbit.stable
    entry["converged"] = entry["converged"] and orbit.converged
    entry["multipliers"] = [[z.real, z.imag] for z in orbit.multipliers]
    entry["max_multiplier"] = orbit.max_multiplier if orbit.found else None
    entry["method"] = "orbit"
    if orbit.stable:
        biggest = max(orbit.multipliers, key=abs)
        nu = abs(cmath.phase(biggest)) / (2 * math.pi)
        entry["slow_frequency_hz"] = nu * rig.drive.frequency_hz
    else:
        entry["slow_frequency_hz"] = None
    for axis, key, ends in (("speed", "speed_window_rpm", ("speed_low", "speed_high")),
                            ("stroke", "stroke_window_m", ("stroke_low", "stroke_high"))):
        window = entry[key]
        if not orbit.stable or window is None:
            entry[key] = None
            continue
        window = list(window)
        for side, end in enumerate(ends):
            if entry["window_ends"][end] == "edge":
                window[side], note = _orbit_edge(rig, name, axis, window[side], orbit)
                if note:
                    entry["messages"].append(note)
        entry[key] = window
    op = {"speed": rig.drive.speed_rpm, "stroke": rig.drive.stroke_m}
    win = {"speed": entry["speed_window_rpm"], "stroke": entry["stroke_window_m"]}
    for axis in ("speed", "stroke"):
        for side, word in ((0, "down"), (1, "up")):
            end = win[axis][side] if win[axis] else None
            value = None if end is None or op[axis] == 0 else abs(end - op[axis]) / op[axis] * 100
            entry["margins_percent"][f"{axis}_{word}"] = value


def _point(at: float, orbit: Orbit, damped: bool, lean_margin: float | None = None) -> Point:
    """One probe of a bracket (``bracket.Point``): held or why not, and its indicators."""
    if not orbit.found:
        return Point(at, False, "lost", None, None, None, orbit)
    rhos = orbit.multipliers
    # without damping 1 - |multiplier| is 0 while held: no use (bracket docstring)
    value = 1.0 - orbit.max_multiplier if damped else None
    fold = abs(math.prod(1.0 - r for r in rhos))
    pair = min(abs(a - b) for i, a in enumerate(rhos) for b in rhos[i + 1:])
    if not orbit.stable:  # beside a lean margin, a stability value is no indicator
        return Point(at, False, "unstable", None if lean_margin is not None else value,
                     None, None, orbit)
    if lean_margin is not None:
        return Point(at, lean_margin > 0, "held" if lean_margin > 0 else "lean",
                     lean_margin, fold, pair, orbit)
    return Point(at, True, "held", value, fold, pair, orbit)


def _moved(rig: Rig, axis: str, value: float) -> Rig:
    return with_operating_point(rig, **{f"{axis}_rpm" if axis == "speed" else "stroke_m": value})


def _holds(rig: Rig, name: str, axis: str, value: float, start, steps: int) -> Point:
    """The held orbit at another speed or stroke, as a bracket point."""
    orbit = solve_orbit(_moved(rig, axis, value), name, start=start, steps=steps, verify=False)
    return _point(value, orbit, is_damped(rig))


def _orbit_edge(rig: Rig, name: str, axis: str, edge: float, op_orbit: Orbit,
                steps: int | None = None):
    """The orbit's window end near a vertical window edge (module docstring), searched on
    ``search_steps``; again on the orbit's own count if those do not hold at the end."""
    op = rig.drive.speed_rpm if axis == "speed" else rig.drive.stroke_m
    inward = 1.0 if op > edge else -1.0
    full = op_orbit.steps
    steps = steps or search_steps(rig, op_orbit)

    def probe(value, start):
        return _holds(rig, name, axis, value, start, steps)
    first = probe(edge, op_orbit.start)
    # from the vertical edge, probe outward while the orbit holds, or inward until it does
    good, bad = (first, None) if first.ok else (None, first)
    toward = -inward if first.ok else inward
    for k in range(1, EDGE_PROBES + 1):
        value = edge * (1.0 + toward * EDGE_STEP * k)
        if toward == inward and (value - op) * inward >= 0:
            good = _point(op, op_orbit, is_damped(rig))  # the operating point holds
            break
        trial = probe(value, good.state.start if good else op_orbit.start)
        if trial.ok:
            good = trial
            if toward == inward:
                break
        else:
            bad = trial
            if toward != inward:
                break
    if good is None or bad is None:
        return edge, (f"the held orbit's {axis} window end near {edge:.6g} was not bracketed "
                      f"within {EDGE_PROBES * EDGE_STEP:.0%}: the vertical edge is given")
    good, _, _ = close(good, bad, probe, lambda p: p.state.start, rtol=EDGE_RTOL)
    if steps < full and not steps_hold(_moved(rig, axis, good.at), good.state.start, steps, full):
        return _orbit_edge(rig, name, axis, edge, op_orbit, full)
    return good.at, ""


def tilt_tolerance(rig: Rig, *, max_lean_deg: float = DEFAULT_MAX_LEAN_DEG) -> dict:
    """The largest axis tilt for which the inverted orbit stays stable and leans less than
    ``max_lean_deg`` (every link), the rig's side motion kept as given.

    Walks the tilt up from 0 by continuation (the step aimed by a secant on the lean,
    at most doubling), then bisects the last step to ``TOLERANCE_TOL_DEG``. Without
    side motion the answer holds for both signs (mirror symmetry); with it both
    signs are walked and the smaller is given.
    """
    signs = (1.0,) if rig.drive.side_stroke_m == 0.0 else (1.0, -1.0)
    found = [_tolerance_one_way(rig, s, max_lean_deg) for s in signs]
    best = min(found, key=lambda f: (f["tilt_tolerance_deg"] is None, f["tilt_tolerance_deg"]))
    if any(f["tilt_tolerance_deg"] is None for f in found):
        best = next(f for f in found if f["tilt_tolerance_deg"] is None)
    return dict(best, max_lean_deg=max_lean_deg)


def _tolerance_one_way(rig: Rig, sign: float, limit: float, coarse: bool = True) -> dict:
    """One sign of tilt (``tilt_tolerance``): on ``orbit.MIN_SEARCH_STEPS`` (``coarse``) when
    they hold at the end found, else again on the full count (at no tilt the orbit may be
    the equilibrium itself, exact at any count: only the end can tell)."""
    full = orbit_steps(rig, "inverted")
    steps = MIN_SEARCH_STEPS if coarse and MIN_SEARCH_STEPS < full else full
    damped = is_damped(rig)

    def tilted(tilt):
        return replace(rig, drive=replace(rig.drive, axis_tilt_deg=sign * tilt))

    def at(tilt, start) -> Point:
        o = solve_orbit(tilted(tilt), "inverted", start=start, steps=steps, verify=False)
        lean = max(abs(math.degrees(v)) for v in o.lean_rad) if o.found else math.inf
        return _point(tilt, o, damped, (limit - lean) / limit if o.found else None)

    def again(end: Point) -> bool:  # the coarse count does not hold at this end
        return steps < full and not steps_hold(tilted(end.at), end.state.start, steps, full)

    first = at(0.0, None)
    if not first.ok and steps < full:  # said on the full count, as every answer is
        return _tolerance_one_way(rig, sign, limit, coarse=False)
    if not first.ok:
        orbit = first.state
        lean = limit * (1.0 - first.value) if first.kind == "lean" else math.inf
        alone = rig.drive.side_stroke_m != 0.0  # without a tilt the side motion is still there
        why = (f"the side motion alone leans it {lean:.3g} deg" if orbit.stable else
               "with the side motion alone (no tilt) the inverted orbit is lost or unstable"
               if alone else "the inverted orbit is not stable even with the drive vertical")
        return {"tilt_tolerance_deg": None, "limited_by": "stability", "message": why}
    good, step = first, 0.25 * limit
    while True:
        nxt = min(MAX_TOLERANCE_DEG, good.at + step)
        trial = at(nxt, good.state.start)
        if not trial.ok:
            bad = trial
            break
        lean = limit * (1.0 - trial.value)
        slope = (lean - limit * (1.0 - good.value)) / (nxt - good.at)
        good = trial
        if good.at >= MAX_TOLERANCE_DEG:
            if again(good):
                return _tolerance_one_way(rig, sign, limit, coarse=False)
            return {"tilt_tolerance_deg": MAX_TOLERANCE_DEG, "limited_by": "none",
                    "message": "the inverted orbit holds at any tilt up to horizontal"}
        aim = (limit - lean) / slope if slope > 0 else step
        step = max(TOLERANCE_TOL_DEG, min(2.0 * step, 1.05 * aim))
    good, bad, _ = close(good, bad, lambda t, start: at(t, start), lambda p: p.state.start,
                         atol=TOLERANCE_TOL_DEG)
    if again(good):
        return _tolerance_one_way(rig, sign, limit, coarse=False)
    limited = "lean" if bad.kind == "lean" else "stability"
    return {"tilt_tolerance_deg": good.at, "limited_by": limited,
            "message": (f"beyond {good.at:.3g} deg the lean passes {limit:g} deg"
                        if limited == "lean" else
                        f"beyond {good.at:.3g} deg the inverted orbit is lost or unstable")}
