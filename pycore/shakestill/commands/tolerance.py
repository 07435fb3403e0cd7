"""Knock tolerance and the recovery (basin) map: ``shakestill tolerance``; op tolerance and
the job kinds tolerance and basin."""

from __future__ import annotations

import json
import sys

from ..model.rig import Problem
from ..model.safety import CAUTIONS
from ..motion.basin import basin_steps
from ..motion.tolerance import tolerance_steps
from ..render.motion_report import tolerance_text
from ..render.plots import basin_svg
from ..render.report import jsonable
from .common import Reader, bad, common_arguments, problems_json, progress, rig_of, rig_of_args, write
from .motion import last_reply
from .table import command, job_kind, op

def _tolerance_arguments(t) -> None:
    common_arguments(t)
    t.add_argument("--map", action="store_true", help="also map recovery over start angle x "
                   "rate (cell-to-cell mapping)")
    t.add_argument("--size", type=int, default=41, help="map points per axis (41)")
    t.add_argument("--refine", type=int, default=2, help="cells per map spacing (2)")
    t.add_argument("--validate", type=int, default=16, help="map points checked by full "
                   "simulation (16)")
    t.add_argument("--svg", help="write the recovery map to this SVG file (implies --map)")


@command("tolerance", "knock tolerance: largest knock and release angle that recover; recovery map",
         _tolerance_arguments)
def _cmd_tolerance(args) -> int:
    rig, _ = rig_of_args(args)
    show = progress(not args.json and sys.stderr.isatty())
    size = args.size
    if not 3 <= size <= 401:
        raise bad("--size", str(size), "use 3 to 401 points per axis")
    if not 0 <= args.validate <= size * size:
        raise bad("--validate", str(args.validate), f"use 0 to {size * size} points")
    if not 1 <= args.refine <= 16:
        raise bad("--refine", str(args.refine), "use 1 to 16 cells per grid spacing")
    steps = tolerance_steps(rig)
    try:
        while True:
            show(next(steps), "tolerance")
    except StopIteration as stop:
        tol = stop.value
    result = tol.as_dict()
    basin = None
    if args.map or args.svg:
        for fraction, last in basin_steps(rig, size=size, refine=args.refine,
                                          validate=args.validate):
            show(fraction, "basin map")
        basin = last.as_dict()
        if args.svg:
            write(args.svg, basin_svg(last, knock_rad_s=tol.max_knock_rad_s or None,
                                       release_rad=tol.max_release_angle_rad or None)[0])
    if show.enabled:
        print(file=sys.stderr)
    if args.json:
        print(json.dumps(jsonable({**result, "basin": basin}), indent=2, allow_nan=False))
    else:
        sys.stdout.write(tolerance_text(result, basin))
    return 0


@job_kind("tolerance")
def _tolerance_job(rig, warnings, request):
    """Yields (fraction, partial reply); the last reply carries the result."""
    steps = tolerance_steps(rig)
    try:
        while True:
            yield 0.999 * next(steps), {"stage": "tolerance"}
    except StopIteration as stop:
        result = stop.value.as_dict()
    yield 1.0, {"stage": "done", "result": result, "report_text": tolerance_text(result)}


@job_kind("basin")
def _basin_job(rig, warnings, request):
    r = Reader(request)
    size = request.get("size", 41)
    if isinstance(size, bool) or not isinstance(size, int) or not 3 <= size <= 401:
        r.problems.append(Problem("size", f"{size!r} is not allowed: 3 to 401 points per axis"))
    validate = request.get("validate", 16)
    if isinstance(validate, bool) or not isinstance(validate, int) or validate < 0:
        r.problems.append(Problem("validate", f"{validate!r} is not allowed: 0 or more points"))
    rate_max = r.field("rate_max_rad_s", "angular_rate", None, above=0.0)
    r.done()
    marks = {"knock_rad_s": request.get("knock_rad_s"), "release_rad": request.get("release_rad")}
    marks = {k: v for k, v in marks.items() if isinstance(v, (int, float)) and v > 0}
    for fraction, basin in basin_steps(rig, size=size, validate=min(validate, size * size),
                                       rate_max_rad_s=rate_max):
        svg, axes = basin_svg(basin, **marks)
        yield fraction, {"stage": "basin", "basin": basin.as_dict(), "svg": svg, "axes": axes}


@op("tolerance")
def _op_tolerance(request: dict) -> dict:
    """The whole tolerance search (and the map with "map": true) in one call."""
    rig, warnings = rig_of(request)
    reply = last_reply(_tolerance_job(rig, warnings, request))
    if request.get("map"):
        result = reply["result"]
        marks = {"knock_rad_s": result["max_knock_rad_s"],
                 "release_rad": result["max_release_angle_rad"]}
        basin = last_reply(_basin_job(rig, warnings, {**request, **marks}))
        reply = {**reply, **basin, "report_text": tolerance_text(result, basin["basin"])}
    return {**reply, "warnings": problems_json(warnings), "cautions": list(CAUTIONS)}
