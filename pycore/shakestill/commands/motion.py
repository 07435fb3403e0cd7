"""Nonlinear motion and loads: ``shakestill simulate`` and ``loads``; ops simulate and loads,
and the motion jobs (motion_job_start, motion_job_step, motion_job_cancel) that run every
registered job kind (simulate here, tolerance and basin, fit)."""

from __future__ import annotations

import csv
import io
import json
import math
import sys
from dataclasses import replace

from ..model.rig import Problem, RigError
from ..model.safety import CAUTIONS
from ..motion.dynamics import model, points_m
from ..motion.loads import loads
from ..motion.orbit import held_orbit
from ..motion.simulation import simulate, simulate_steps
from ..render.motion_report import loads_text, motion_text
from ..render.plots import line_plot, loads_svg, motion_svg
from ..render.report import jsonable
from .common import (Reader, bad, common_arguments, problems_json, quantity, rig_of, rig_of_args,
                     units_argument, units_of, write)
from .jobs import DEFAULT_BUDGET_MS, JobStore
from .motion_scenario import rename_options, scenario_from_args, scenario_from_request
from .table import JOB_KINDS, command, job_kind, op

def pivot_points(motion, m) -> list:
    """Lab positions of the pivot and each link's end per frame (the pivot's sideways
    motion included when the drive is off vertical)."""
    sides = motion.pivot_x_m or (0.0,) * len(motion.t_s)
    return [points_m(m, q, y, x) for q, y, x in zip(motion.angles_rad, motion.pivot_y_m, sides)]


def motion_csv(motion, m) -> str:
    """Frames as CSV: time, speed, pivot height (and sideways position off vertical), angles,
    rates, link ends (m), energy."""
    n = m.n
    side = ["pivot_x_m"] if motion.pivot_x_m else []
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["t_s", "speed_rpm", "pivot_y_m"] + side + [f"angle{i + 1}_rad" for i in range(n)]
               + [f"rate{i + 1}_rad_s" for i in range(n)]
               + [c for i in range(n) for c in (f"x{i + 1}_m", f"y{i + 1}_m")] + ["energy_J"])
    for k, (t, points) in enumerate(zip(motion.t_s, pivot_points(motion, m))):
        q = motion.angles_rad[k]
        ends = points[1:]
        w.writerow([f"{t:.10g}", f"{motion.speed_rpm[k]:.10g}", f"{motion.pivot_y_m[k]:.10g}"]
                   + [f"{motion.pivot_x_m[k]:.10g}" for _ in side]
                   + [f"{x:.10g}" for x in q] + [f"{x:.10g}" for x in motion.rates_rad_s[k]]
                   + [f"{c:.10g}" for p in ends for c in p] + [f"{motion.energy_J[k]:.10g}"])
    return buf.getvalue()


def from_held_orbit(rig, sc):
    """(scenario, orbit): off vertical at the rig's own speed, the held orbit near the
    reference (None when there is none), and a run that starts at rest starts on it (the
    pendulum's motion at rest there); otherwise the scenario as given and None."""
    if not rig.drive.off_vertical or sc.profile is not None:
        return sc, None
    orbit = held_orbit(rig, sc.reference)
    if not orbit.found:
        return sc, None
    if sc.angles_rad is not None or sc.rates_rad_s is not None:
        return sc, orbit
    n = rig.n_links
    return replace(sc, angles_rad=tuple(orbit.start[:n]), rates_rad_s=tuple(orbit.start[n:])), orbit


def _held_words(orbit) -> dict:
    """The reply's note of the held orbit a run started on (the page draws its lean)."""
    if orbit is None:
        return {}
    return {"held_orbit": {"equilibrium": orbit.equilibrium,
                           "lean_deg": [math.degrees(v) for v in orbit.lean_rad],
                           "wobble_deg": [math.degrees(v) for v in orbit.wobble_rad],
                           "stable": orbit.stable, "message": orbit.message}}


def _simulate_arguments(s) -> None:
    common_arguments(s)
    s.add_argument("--duration", default="5s", help="rig time to simulate (5s)")
    s.add_argument("--angle", action="append", help="initial angle from upward vertical, one "
                   "per link in order (default: the reference position), e.g. 10deg")
    s.add_argument("--rate", action="append", help="initial angular rate per link, e.g. 1rad/s")
    s.add_argument("--knock", action="append", metavar="T:RATE[:LINK]",
                   help="rate step at a time, e.g. 2s:3rad/s (link 1) or 2s:3rad/s:2")
    s.add_argument("--set", action="append", metavar="T:ANGLES[:RATES]",
                   help="set the state at a time, e.g. 3s:10deg,0deg or 3s::0,0")
    s.add_argument("--ramp", action="append", metavar="AT:OVER:TO",
                   help="speed ramp, e.g. 1s:2s:3000rpm; a stop: 6s:1s:stop")
    s.add_argument("--start-speed", help="the speed until the first ramp, e.g. 0rpm for a "
                   "run-up from rest (default: the rig's)")
    s.add_argument("--speed-table", metavar="CSV", help="measured speed: rows TIME,SPEED")
    s.add_argument("--fps", default="60", help="frames per second written (60)")
    s.add_argument("--strobe-phase", default="0", help="drive phase of the once-per-cycle "
                   "samples (0)")
    s.add_argument("--hanging", action="store_true", help="start from and measure events "
                   "about the hanging position")
    s.add_argument("--fall-band", default="90deg", help="'fell' when an angle leaves this band "
                   "about the reference (90deg)")
    s.add_argument("--recover-band", default="0.2rad", help="'recovered' when all angles are "
                   "back within this band ... (0.2rad)")
    s.add_argument("--settle", default="1s", help="... for this long (1s)")
    s.add_argument("--rtol", default="1e-8", help="integration tolerance (1e-8)")
    s.add_argument("-o", "--output", metavar="CSV", help="write the frames to this CSV file")
    s.add_argument("--svg", help="write a plot of the angles to this SVG file")


@command("simulate", "nonlinear motion with knocks, jumps and speed ramps", _simulate_arguments)
def _cmd_simulate(args) -> int:
    rig, _ = rig_of_args(args)
    scenario, _ = from_held_orbit(rig, scenario_from_args(args, rig))
    m = model(rig)
    try:
        motion = simulate(rig, scenario, chain_model=m)
    except RigError as exc:
        raise rename_options(exc) from None
    if args.output:
        write(args.output, motion_csv(motion, m))
    if args.svg:
        if not motion.t_s:
            raise bad("--svg", args.svg, "a plot needs frames: give --fps above 0")
        write(args.svg, motion_svg(motion, rig.title or "Link angles")[0])
    if args.json:
        summary = {"end_t_s": motion.end_t_s, "end_state": list(motion.end_state),
                   "fell": motion.fell, "turns": list(motion.turns),
                   "events": [e.as_dict() for e in motion.events],
                   "strobe": {"t_s": list(motion.strobe_t_s),
                              "angles_rad": [list(q) for q in motion.strobe_angles_rad],
                              "rates_rad_s": [list(w) for w in motion.strobe_rates_rad_s]},
                   "frames": len(motion.t_s), "success": motion.success,
                   "message": motion.message, "work": motion.work}
        print(json.dumps(jsonable(summary), indent=2, allow_nan=False))
    else:
        sys.stdout.write(motion_text(motion, rig.title))
        for name, path in (("frames", args.output), ("plot", args.svg)):
            if path:
                print(f"wrote {name} to {path}")
    return 0 if motion.success else 1


def _loads_arguments(ld) -> None:
    common_arguments(ld)
    ld.add_argument("--hanging", action="store_true", help="the pendulum hanging, not inverted")
    ld.add_argument("--knock", help="knock the first link first, e.g. 5rad/s: loads after "
                    "max(10 s, 20 slow periods)")
    ld.add_argument("--cycles", type=int, default=1, help="drive cycles in the window (1)")
    ld.add_argument("--svg", help="write the loads over the cycle to this SVG file")
    units_argument(ld)


@command("loads", "drive force, power and link loads over a cycle", _loads_arguments)
def _cmd_loads(args) -> int:
    rig, _ = rig_of_args(args)
    knock = quantity(args.knock, "angular_rate", "--knock") if args.knock else 0.0
    if not 1 <= args.cycles <= 1000:
        raise bad("--cycles", str(args.cycles), "use 1 to 1000 cycles")
    result = loads(rig, equilibrium="hanging" if args.hanging else "inverted",
                   knock_rad_s=knock, cycles=args.cycles)
    if args.svg:
        write(args.svg, loads_svg(result, args.units)[0])
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(loads_text(result, args.units))
    return 0


def last_reply(job) -> dict:
    """A job's final reply, without its stage."""
    reply = {}
    for _, reply in job:
        pass
    return {k: v for k, v in reply.items() if k != "stage"}


@op("simulate")
def _op_simulate(request: dict) -> dict:
    return last_reply(_simulate_job(*rig_of(request), request))


@job_kind("simulate")
def _simulate_job(rig, warnings, request):
    """Yields (fraction, partial reply); the last reply carries the frames."""
    sc, orbit = from_held_orbit(rig, scenario_from_request(request, rig))
    m = model(rig)
    run = simulate_steps(rig, sc, chain_model=m)
    try:
        while True:
            yield 0.999 * next(run), {"stage": "simulate"}
    except StopIteration as stop:
        motion = stop.value
    points = pivot_points(motion, m)
    # Every stroboscopic sample is at the same drive phase, so at the same pivot position;
    # positions here let the page draw the samples without geometry of its own.
    strobe_y = m.kinematics(sc.strobe_phase_rad)[0] if sc.strobe_phase_rad is not None else 0.0
    strobe_x = (m.planar(sc.strobe_phase_rad)[3]
                if m.planar is not None and sc.strobe_phase_rad is not None else 0.0)
    strobe_points = [points_m(m, q, strobe_y, strobe_x) for q in motion.strobe_angles_rad]
    side = {"pivot_x_m": list(motion.pivot_x_m)} if motion.pivot_x_m else {}
    strobe_side = {"pivot_x_m": strobe_x} if m.planar is not None else {}
    svg, axes = motion_svg(motion, rig.title or "Link angles") if motion.t_s else (None, None)
    strobe_svg, strobe_axes = _strobe_svg(motion) if len(motion.strobe_t_s) > 1 else (None, None)
    yield 1.0, {
        "stage": "done",
        "frames": {"t_s": list(motion.t_s), "pivot_y_m": list(motion.pivot_y_m), **side,
                   "speed_rpm": list(motion.speed_rpm), "energy_J": list(motion.energy_J),
                   "angles_rad": [list(q) for q in motion.angles_rad],
                   "x_m": [[p[0] for p in pts] for pts in points],
                   "y_m": [[p[1] for p in pts] for pts in points]},
        "frame_rate_hz": sc.frame_rate_hz, "links": rig.n_links, **_held_words(orbit),
        **({"axis_tilt_deg": rig.drive.axis_tilt_deg} if rig.drive.off_vertical else {}),
        "strobe": {"t_s": list(motion.strobe_t_s), "phase_rad": sc.strobe_phase_rad,
                   "angles_rad": [list(q) for q in motion.strobe_angles_rad],
                   "rates_rad_s": [list(w) for w in motion.strobe_rates_rad_s],
                   "pivot_y_m": strobe_y, **strobe_side,
                   "x_m": [[p[0] for p in pts] for pts in strobe_points],
                   "y_m": [[p[1] for p in pts] for pts in strobe_points]},
        "events": [{**e.as_dict(), "link": None if e.link is None else e.link + 1}
                   for e in motion.events],
        "summary": {"end_t_s": motion.end_t_s, "fell": motion.fell, "turns": list(motion.turns),
                    "success": motion.success, "message": motion.message, "work": motion.work},
        "svg": svg, "axes": axes, "strobe_svg": strobe_svg, "strobe_axes": strobe_axes,
        "report_text": motion_text(motion, rig.title),
        "csv": motion_csv(motion, m),  # the same file as `simulate -o`
        "warnings": problems_json(warnings), "cautions": list(CAUTIONS)}


ANGLE_SPAN_DEG = 0.01  # the once-per-cycle plot spans at least this: finer is no motion to see


def _strobe_svg(motion) -> tuple[str, dict]:
    """The once-per-cycle samples of each link's angle: the slow motion without the shake."""
    n = len(motion.strobe_angles_rad[0])
    series = [(f"link {i + 1}", motion.strobe_t_s,
               [math.degrees(q[i]) for q in motion.strobe_angles_rad]) for i in range(n)]
    return line_plot(series, title="Once per drive cycle", x_label="time (s)",
                     y_label="angle once per cycle (deg)", x_unit="s", y_unit="deg",
                     height_px=240, cls="strobe-plot", min_span=ANGLE_SPAN_DEG)


@op("loads")
def _op_loads(request: dict) -> dict:
    rig, warnings = rig_of(request)
    r = Reader(request)
    knock = r.field("knock_rad_s", "angular_rate", 0.0)
    cycles = request.get("cycles", 1)
    if isinstance(cycles, bool) or not isinstance(cycles, int) or not 1 <= cycles <= 1000:
        r.problems.append(Problem("cycles", f"{cycles!r} is not allowed: 1 to 1000 cycles"))
    equilibrium = request.get("equilibrium", "inverted")
    if equilibrium not in ("inverted", "hanging"):
        r.problems.append(Problem("equilibrium", f"{equilibrium!r} is not allowed: use "
                                                 "\"inverted\" or \"hanging\""))
    r.done()
    units = units_of(request)
    result = loads(rig, equilibrium=equilibrium, knock_rad_s=knock, cycles=cycles)
    svg, axes = loads_svg(result, units)
    return {"result": result, "svg": svg, "axes": axes, "report_text": loads_text(result, units),
            "warnings": problems_json(warnings)}


# Long motion work runs as a job of a registered kind: motion_job_start, then
# motion_job_step repeatedly (about budget_ms of work each, the progress and the picture so
# far), or motion_job_cancel.
_MOTION_JOBS = JobStore()


@op("motion_job_start")
def _op_job_start(request: dict) -> dict:
    kind = request.get("kind")
    if kind not in JOB_KINDS:
        raise RigError([Problem("kind", f"{kind!r} is not allowed: use one of "
                                        + ", ".join(sorted(JOB_KINDS)))])
    job = _MOTION_JOBS.start(kind, JOB_KINDS[kind](*rig_of(request), request))
    return {"job": job, "kind": kind}


@op("motion_job_step")
def _op_job_step(request: dict) -> dict:
    job_id = request.get("job")
    job = _MOTION_JOBS.get(job_id, f"{job_id!r}: no such job (finished or cancelled)")
    done = _MOTION_JOBS.run(job_id, request.get("budget_ms", DEFAULT_BUDGET_MS),
                            until=lambda j: j["fraction"] >= 1.0)
    return {"job": job_id, "kind": job["kind"], "done": done,
            "fraction": 1.0 if done else job["fraction"], **(job["last"] or {})}


@op("motion_job_cancel")
def _op_job_cancel(request: dict) -> dict:
    return {"cancelled": _MOTION_JOBS.cancel(request.get("job"))}
