"""The lean chart of a drive off vertical: ``shakestill lean``, op ``lean`` and the motion job
kind ``lean`` (the page steps it so that its worker stays free)."""

from __future__ import annotations

import json
import sys

from ..model.rig import MAX_TILT_DEG, Problem, RigError
from ..model.safety import CAUTIONS
from ..motion.lean_chart import DEFAULT_SPEEDS, DEFAULT_TILTS, MAX_POINTS, lean_chart_steps
from ..render.lean_svg import lean_svg
from ..render.report import jsonable, lean_text
from .common import (Reader, common_arguments, problems_json, quantity, rig_of, rig_of_args,
                     tilted, units_argument, units_of, write)
from .table import command, job_kind, op


def _lean_arguments(p) -> None:
    common_arguments(p)
    p.add_argument("--tilt", help="the drive's tilt for the speed curve, overriding "
                   "drive.axis_tilt_deg, e.g. 1.5 (deg) or 0.02rad")
    p.add_argument("--max-tilt", help="the tilt axis runs from 0 to this (default twice the "
                   "rig's tilt, at least 5 deg)")
    p.add_argument("--tilts", type=int, default=DEFAULT_TILTS,
                   help=f"points on the tilt axis ({DEFAULT_TILTS})")
    p.add_argument("--speeds", type=int, default=DEFAULT_SPEEDS,
                   help=f"points on the speed axis ({DEFAULT_SPEEDS})")
    p.add_argument("-o", "--svg", help="write the lean chart to this SVG file")
    units_argument(p)


def _counts(tilts, speeds, problems, prefix: str = "") -> None:
    """Points per axis, 3 to MAX_POINTS; ``prefix`` "--" names them as options."""
    for where, count in (("tilts", tilts), ("speeds", speeds)):
        if isinstance(count, bool) or not isinstance(count, int) or not 3 <= count <= MAX_POINTS:
            problems.append(Problem(prefix + where, f"{count!r} is not allowed: 3 to "
                                                    f"{MAX_POINTS} points"))


def _run(steps):
    while True:
        try:
            next(steps)
        except StopIteration as stop:
            return stop.value


@command("lean", "lean of the held orbit against the drive's tilt and speed", _lean_arguments)
def _cmd_lean(args) -> int:
    rig, warnings = rig_of_args(args)
    rig = tilted(rig, args.tilt)
    top = quantity(args.max_tilt, "angle_deg", "--max-tilt", above=0.0)
    problems = []
    _counts(args.tilts, args.speeds, problems, "--")
    if top is not None and top > MAX_TILT_DEG:
        problems.append(Problem("--max-tilt", f"{args.max_tilt!r} is not allowed: up to "
                                              f"{MAX_TILT_DEG:g} deg"))
    if problems:
        raise RigError(problems)
    chart = _run(lean_chart_steps(rig, max_tilt_deg=top, tilts=args.tilts, speeds=args.speeds))
    if args.svg:
        write(args.svg, lean_svg(chart, args.units)[0])
    if args.json:
        print(json.dumps(jsonable(dict(chart, cautions=list(CAUTIONS))), indent=2,
                         allow_nan=False))
    else:
        sys.stdout.write(lean_text(chart, rig.title, args.units))
    return 0


def _chart_request(rig, request):
    """The lean chart's generator for a request: ``max_tilt_deg``, ``tilts``, ``speeds``."""
    r = Reader(request)
    top = r.field("max_tilt_deg", "angle_deg", None, above=0.0)
    if top is not None and top > MAX_TILT_DEG:
        r.problems.append(Problem("max_tilt_deg", f"{top!r} is not allowed: up to "
                                                  f"{MAX_TILT_DEG:g} deg"))
    tilts, speeds = request.get("tilts", DEFAULT_TILTS), request.get("speeds", DEFAULT_SPEEDS)
    _counts(tilts, speeds, r.problems)
    r.done()
    return lean_chart_steps(rig, max_tilt_deg=top, tilts=tilts, speeds=speeds)


def _reply(chart, warnings, units: str) -> dict:
    svg, axes = lean_svg(chart, units)
    return {"result": chart, "svg": svg, "axes": axes, "report_text": lean_text(chart, units=units),
            "warnings": problems_json(warnings), "cautions": list(CAUTIONS)}


@op("lean")
def _op_lean(request: dict) -> dict:
    rig, warnings = rig_of(request)
    units = units_of(request)
    return _reply(_run(_chart_request(rig, request)), warnings, units)


@job_kind("lean")
def _lean_job(rig, warnings, request):
    """Yields (fraction, partial reply); the last reply carries the chart."""
    steps = _chart_request(rig, request)
    units = units_of(request)
    try:
        while True:
            yield 0.999 * next(steps), {"stage": "lean"}
    except StopIteration as stop:
        chart = stop.value
    yield 1.0, dict(_reply(chart, warnings, units), stage="done")
