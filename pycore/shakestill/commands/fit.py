"""Fitting the model to a run logged on the real rig: ``shakestill fit``; op fit and the fit
job kind.

Request fields: ``rig``; ``log`` (the log's text, see ``fit.logfile``);
``reference`` ("hanging", default, or "inverted": where the log's angles are
zero); ``parameters`` (names for ``fit.fitting.parameter_paths``, default
["damping"]); ``max_iterations`` (default 30); ``drive_stopped`` (true: a free
decay with the drive standing still, when the log has no speed column; else
the log's speed column or the rig's own speed). The reply carries the fit
(``result``, as ``shakestill fit --json``), the fitted rig as a rig file
(``fitted_rig``), its plot (``svg``, ``axes``) and the words.
"""

from __future__ import annotations

import json
import sys

from ..fit.fitting import MAX_ITERATIONS, fit_dict, fit_steps
from ..fit.logfile import REFERENCE_ANGLE, drive_stopped, read_angle_log
from ..model.rig import Problem, RigError
from ..model.rigfile import rig_to_dict, save_rig
from ..model.safety import CAUTIONS
from ..render.motion_report import fit_text
from ..render.plots import fit_csv, fit_svg
from ..render.report import jsonable
from .common import (problems_json, progress, read_text, rig_of, rig_of_args, units_argument, units_of,
                     write)
from .motion import last_reply
from .table import command, job_kind, op


def _fit_arguments(f) -> None:
    f.add_argument("rig", nargs="?", metavar="RIG")
    f.add_argument("--log", required=True, metavar="CSV", help="the logged run: a header row "
                   "such as t_s,angle_deg[,speed_rpm] (one angle column per link), then samples")
    f.add_argument("--fit", default="damping", help="numbers to fit, comma-separated: damping, "
                   "friction, inertia (every link), or links[i].joint_damping_N_m_s ... (damping)")
    f.add_argument("--zero", choices=("hanging", "inverted"), default="hanging",
                   help="where the log's angles are zero (hanging)")
    f.add_argument("--iterations", type=int, default=30, help="most iterations (30)")
    f.add_argument("--stopped", action="store_true", help="the drive stood still during the "
                   "run (a free decay), when the log has no speed column")
    f.add_argument("--speed", help="the drive speed during the run when the log has no speed "
                   "column, e.g. 1800rpm (default: the rig's)")
    f.add_argument("--stroke", help="the stroke during the run, e.g. 25mm")
    f.add_argument("--json", action="store_true", help="print the result as JSON")
    f.add_argument("-o", "--output", metavar="RIG", help="write the fitted rig file here")
    f.add_argument("--svg", help="write a plot of logged and fitted angles to this SVG file")
    units_argument(f)


@command("fit", "fit damping, friction or inertia to a run logged on the rig", _fit_arguments)
def _cmd_fit(args) -> int:
    rig, _ = rig_of_args(args)
    text = read_text(args.log, "--log")
    if not 1 <= args.iterations <= 200:
        raise RigError([Problem("--iterations", f"{args.iterations!r} is not allowed: 1 to 200")])
    log = read_angle_log(text, rig.n_links, reference=args.zero)
    if args.stopped:
        log = drive_stopped(log, "--stopped")
    names = [n.strip() for n in args.fit.split(",") if n.strip()]
    show = progress(not args.json and sys.stderr.isatty())
    try:
        steps = fit_steps(rig, log, names, max_iterations=args.iterations)
        while True:
            fraction, words = next(steps)
            show(fraction, "fit")
    except StopIteration as stop:
        res = stop.value
    except ValueError as exc:
        where, _, why = str(exc).partition(": ")
        raise RigError([Problem("--fit" if where == "parameters" else "--log", why)]) from None
    if show.enabled:
        print(file=sys.stderr)
    result = fit_dict(res)
    if args.output:
        save_rig(res.rig, args.output)
    if args.svg:
        write(args.svg, fit_svg(res, f"{rig.title or 'Rig'}: logged and fitted angles",
                                log.reference)[0])
    if args.json:
        print(json.dumps(jsonable(result), indent=2, allow_nan=False))
    else:
        sys.stdout.write(fit_text(result, log.reference, args.units))
        if args.output:
            print(f"wrote the fitted rig to {args.output}")
    return 0 if res.converged else 1


def _settings(rig, request: dict):
    """(log, parameters, max_iterations) of a request; RigError names every bad field."""
    problems = []
    reference = request.get("reference", "hanging")
    if reference not in REFERENCE_ANGLE:
        problems.append(Problem("reference", f"{reference!r} is not allowed: use \"hanging\" "
                                             "or \"inverted\" (where the log's angles are 0)"))
    names = request.get("parameters", ["damping"])
    if not isinstance(names, list) or not names or not all(isinstance(n, str) for n in names):
        problems.append(Problem("parameters", f"{names!r} is not allowed: give a list of names "
                                              "such as [\"damping\", \"friction\"]"))
    most = request.get("max_iterations", MAX_ITERATIONS)
    if isinstance(most, bool) or not isinstance(most, int) or not 1 <= most <= 200:
        problems.append(Problem("max_iterations", f"{most!r} is not allowed: 1 to 200"))
    text = request.get("log")
    if not isinstance(text, str) or not text.strip():
        problems.append(Problem("log", "is required: the logged run as CSV text with a header "
                                       "row (t_s, angle_deg, ...)"))
    stopped = request.get("drive_stopped", False)
    if not isinstance(stopped, bool):
        problems.append(Problem("drive_stopped", f"{stopped!r} is not allowed: true or false"))
    if problems:
        raise RigError(problems)
    log = read_angle_log(text, rig.n_links, reference=reference)
    return (drive_stopped(log, "drive_stopped") if stopped else log), names, most


@job_kind("fit")
def fit_job(rig, warnings, request: dict):
    """Yields (fraction, partial reply); the last reply carries the fit."""
    units = units_of(request)  # a bad one is named before any work
    log, names, most = _settings(rig, request)
    try:
        steps = fit_steps(rig, log, names, max_iterations=most)
        while True:
            fraction, words = next(steps)
            yield 0.999 * fraction, {"stage": words}
    except StopIteration as stop:
        res = stop.value
    except ValueError as exc:  # a parameter name, or a log the model cannot follow
        where = str(exc).split(":", 1)[0]
        raise RigError([Problem(where if where in ("parameters", "log") else "log",
                                str(exc).split(": ", 1)[-1])]) from None
    result = fit_dict(res)
    svg, axes = fit_svg(res, f"{rig.title or 'Rig'}: logged and fitted angles", log.reference)
    yield 1.0, {"stage": "done", "result": result, "fitted_rig": rig_to_dict(res.rig),
                "svg": svg, "axes": axes, "csv": fit_csv(res, log.reference),
                "report_text": fit_text(result, log.reference, units),
                "warnings": problems_json(warnings),
                "cautions": list(CAUTIONS)}


@op("fit")
def _op_fit(request: dict) -> dict:
    return last_reply(fit_job(*rig_of(request), request))
