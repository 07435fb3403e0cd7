"""Stability of the equilibria: ``shakestill check``, ``chart`` and ``runup``; ops check,
point (the chart's read-out), runup and the chart job (job_start, job_step, job_cancel)."""

from __future__ import annotations

import json
import sys
from dataclasses import replace

from ..equilibria.chart import chart, chart_dict, chart_steps, stroke_for_peak_accel
from ..motion.lean import check, held_windows
from ..equilibria.floquet import stability
from ..equilibria.runup import NoRateToRecommend, runup
from ..model.drive import peak_accel_m_s2
from ..model.rig import Problem, RigError, with_operating_point
from ..model.rigfile import rig_to_dict
from ..model.safety import CAUTIONS
from ..model.units import UnitError, parse_quantity
from ..render.chart_svg import render
from ..render.report import jsonable, report_text, runup_text
from .common import (problems_json, quantity, rig_of, rig_of_args, tilted, units_argument,
                     units_of)
from .jobs import DEFAULT_BUDGET_MS, JobStore
from .table import command, op


def _operating_point_options(p) -> None:
    p.add_argument("--speed", help="move the operating point's speed, e.g. 1800rpm")
    p.add_argument("--stroke", help="move the operating point's stroke, e.g. 25mm")


def _check_arguments(p) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--speed", help="override the drive speed, e.g. 1800rpm or 30Hz")
    p.add_argument("--stroke", help="override the stroke, e.g. 25mm")
    p.add_argument("--tilt", help="override drive.axis_tilt_deg, e.g. 1.5 (deg) or 0.02rad")
    p.add_argument("--max-lean", help="the lean the tilt tolerance allows (limits.max_lean_deg; "
                                      "default 5 deg)")
    units_argument(p)


@command("check", "stability of both equilibria at the operating point", _check_arguments)
def _cmd_check(args) -> int:
    rig, warnings = rig_of_args(args)
    rig = tilted(rig, args.tilt)
    result = check(rig, max_lean_deg=quantity(args.max_lean, "angle_deg", "--max-lean", above=0.0))
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(report_text(result, warnings, args.units))
    return 0


def _chart_arguments(p) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("-o", "--output", help="write the SVG to this file")
    p.add_argument("--json", action="store_true", help="print rows, edges, boundaries as JSON")
    p.add_argument("--rows", type=int, help="rows across the y range (default 120, any link count)")
    p.add_argument("--y-axis", choices=("stroke", "accel"), default="stroke",
                   help="stroke, or peak pivot acceleration")
    units_argument(p)
    _operating_point_options(p)


@command("chart", "stability map over speed x stroke (SVG, or --json)", _chart_arguments)
def _cmd_chart(args) -> int:
    rig, _ = rig_of_args(args)
    if args.rows is not None and not 2 <= args.rows <= 2000:
        raise RigError([Problem("--rows", f"{args.rows} is not allowed: use 2 to 2000 rows")])
    c = _with_held_orbit(rig, chart(rig, rows=args.rows, y_axis=args.y_axis))
    svg, axes = render(c, rig, units=args.units)
    if args.output:
        with open(args.output, "w", encoding="utf-8") as fh:
            fh.write(svg)
    if args.json:
        print(json.dumps(jsonable({**chart_dict(c), "axes": axes}), allow_nan=False))
    elif not args.output:
        sys.stdout.write(svg + "\n")
    else:
        print(f"wrote {args.output}: {len(c.rows)} rows, {c.evaluations} stability evaluations")
    return 0


def _runup_arguments(p) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("--rate", help="ramp rate, e.g. 200rpm/s (default: the recommended one, the "
                   "smallest rate keeping the hanging pendulum's growth under the factor)")
    p.add_argument("--from", dest="start", help="start speed (default 0: from rest)")
    p.add_argument("--to", help="end speed (default: the operating speed)")
    p.add_argument("--factor", help="largest acceptable growth of a disturbance (10)")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    units_argument(p)
    _operating_point_options(p)


def _runup_or_named(rig, rate, start, end, factor, field: str) -> dict:
    """runup(), with no rate to recommend named as a problem of the rate's field."""
    try:
        return runup(rig, rate_rpm_s=rate, start_rpm=start, end_rpm=end, factor=factor)
    except NoRateToRecommend as exc:
        raise RigError([Problem(field, str(exc))]) from None


@command("runup", "resonances crossed while the speed ramps", _runup_arguments)
def _cmd_runup(args) -> int:
    rig, _ = rig_of_args(args)
    rate = quantity(args.rate, "rate", "--rate", above=0.0)
    start = quantity(args.start, "speed", "--from", minimum=0.0) or 0.0
    end = quantity(args.to, "speed", "--to", above=0.0)
    factor = quantity(args.factor, "plain", "--factor", above=1.0) or 10.0
    result = _runup_or_named(rig, rate, start, end, factor, "--rate")
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(runup_text(result, args.units))
    return 0


@op("check")
def _op_check(request: dict) -> dict:
    rig, warnings = rig_of(request)
    units = units_of(request)
    result = check(rig)
    return {"rig": rig_to_dict(rig), "result": result,
            "report_text": report_text(result, warnings, units),
            "warnings": problems_json(warnings), "cautions": list(CAUTIONS)}


@op("point")
def _op_point(request: dict) -> dict:
    """Exact stability of both equilibria at one (speed, stroke): the chart's read-out."""
    rig, _ = rig_of(request)
    try:
        speed = parse_quantity(request.get("speed_rpm"), "speed")
        if "stroke_m" in request:
            stroke = parse_quantity(request.get("stroke_m"), "length")
        else:  # the chart's acceleration view gives a peak acceleration instead
            accel = parse_quantity(request.get("peak_accel_m_s2"), "acceleration")
            stroke = stroke_for_peak_accel(rig, accel, speed) if speed > 0 else -1.0
    except UnitError as exc:
        raise RigError([Problem("speed_rpm/stroke_m", str(exc))]) from None
    if not (speed > 0 and stroke >= 0):
        raise RigError([Problem("speed_rpm/stroke_m", "the speed must be above 0 and the "
                                                      "stroke at least 0")])
    out = {"speed_rpm": speed, "stroke_m": stroke,
           "peak_accel_m_s2": peak_accel_m_s2(with_operating_point(rig, stroke_m=stroke).drive,
                                              speed)}
    for eq in ("inverted", "hanging"):
        s = stability(rig, eq, speed_rpm=speed, stroke_m=stroke)
        out[eq] = {"stable": s.stable, "max_multiplier": s.max_multiplier,
                   "slow_frequency_hz": s.slow_frequency_hz, "converged": s.converged}
    return out


@op("runup")
def _op_runup(request: dict) -> dict:
    rig, _ = rig_of(request)
    given = request.get("rate_rpm_s")  # none: recommend one, as `shakestill runup`
    try:
        start = float(request.get("start_rpm", 0.0))
        end, factor = request.get("end_rpm"), float(request.get("factor", 10.0))
        result = _runup_or_named(rig, None if given is None else float(given), start, end,
                                 factor, "rate_rpm_s")
    except RigError:
        raise  # a named field already
    except (TypeError, ValueError) as exc:
        raise RigError([Problem("runup", str(exc))]) from None
    return {"result": result, "report_text": runup_text(result, units_of(request))}


# The chart is long work: job_start, then job_step repeatedly (each call does about
# budget_ms of work and returns the picture so far), or job_cancel.
_CHARTS = JobStore()


@op("job_start")
def _op_job_start(request: dict) -> dict:
    kind = request.get("kind")
    if kind != "chart":
        raise RigError([Problem("kind", f"{kind!r} is not a job this core runs (chart)")])
    rig, _ = rig_of(request)
    try:
        rows = request.get("rows")
        steps = chart_steps(rig, rows=None if rows is None else int(rows),
                            y_axis=request.get("y_axis", "stroke"))
    except ValueError as exc:
        raise RigError([Problem(kind, str(exc))]) from None
    units = units_of(request)
    job = _CHARTS.start(kind, _checked(_held_orbit_last(rig, steps)))
    _CHARTS.jobs[job]["rig"] = rig
    _CHARTS.jobs[job]["units"] = units  # the stroke axis's unit on the picture
    return {"job": job}


def _with_held_orbit(rig, c):
    """Off vertical, the finished map carries the held orbit's windows (the check's)."""
    return replace(c, held_orbit=held_windows(rig)) if rig.drive.off_vertical else c


def _held_orbit_last(rig, steps):
    """A chart's steps; off vertical the last one is held back (not complete) until the held
    orbit's windows are on it."""
    for fraction, c in steps:
        if c.complete and rig.drive.off_vertical:
            yield fraction, replace(c, complete=False)
            yield 1.0, _with_held_orbit(rig, c)
            return
        yield fraction, c


def _checked(steps):
    """A chart's steps with a numerical misuse reported as a problem of the job."""
    try:
        yield from steps
    except ValueError as exc:
        raise RigError([Problem("chart", str(exc))]) from None


@op("job_step")
def _op_job_step(request: dict) -> dict:
    job_id = request.get("job")
    job = _CHARTS.get(job_id, "no such job (finished or cancelled)")
    done = _CHARTS.run(job_id, request.get("budget_ms", DEFAULT_BUDGET_MS),
                       until=lambda j: j["last"].complete)
    reply = {"fraction": 1.0 if done else job["fraction"], "done": done}
    if job["last"] is not None and (done or request.get("partial", True)):
        svg, axes = render(job["last"], job["rig"], units=job["units"])
        reply.update({"svg": svg, "axes": axes, "chart": chart_dict(job["last"])})
    return reply


@op("job_cancel")
def _op_job_cancel(request: dict) -> dict:
    return {"cancelled": _CHARTS.cancel(request.get("job"))}
