"""Planning the operating point over the rig's spreads: ``shakestill plan``, the ``plan`` op and
the ``plan`` job kind (motion_job_start with kind "plan": progress and cancel)."""

from __future__ import annotations

import json
import sys

from ..equilibria.plan import FOR_CHOICES, plan_steps
from ..equilibria.plan_report import plan_dict
from ..model.rig import Problem, RigError
from ..model.safety import CAUTIONS
from ..render.plan_text import plan_text
from ..render.report import jsonable
from .common import Reader, progress, quantity, rig_of, rig_of_args, units_argument, units_of
from .table import command, job_kind, op


def _plan_arguments(p) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("--for", dest="target", choices=tuple(FOR_CHOICES), default="inverted",
                   help="the equilibrium to hold (inverted)")
    p.add_argument("--stroke-weight", help="per cent of stroke margin worth one per cent of "
                   "speed margin (1: the smaller of the two)")
    p.add_argument("--rows", type=int, help="stroke rows of each rig's chart (40; 12 for "
                   "several links)")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    units_argument(p)


ROWS = (4, 400)  # stroke rows of each rig's chart a plan may ask for
WEIGHTS = (0.01, 100.0)  # a stroke weight outside these makes one margin all that counts


def _check(rows, weight, rows_at: str, weight_at: str) -> None:
    problems = []
    if rows is not None and not (isinstance(rows, int) and ROWS[0] <= rows <= ROWS[1]):
        problems.append(Problem(rows_at, f"{rows!r} is not allowed: use a whole number of "
                                         f"{ROWS[0]} to {ROWS[1]} rows"))
    if not WEIGHTS[0] <= weight <= WEIGHTS[1]:
        problems.append(Problem(weight_at, f"{weight!r} is not allowed: use a stroke weight from "
                                           f"{WEIGHTS[0]:g} to {WEIGHTS[1]:g}"))
    if problems:
        raise RigError(problems)


def _steps(rig, target: str, weight: float, rows):
    """(fraction, stage) while working; the plan's plain data at the end (fraction 1)."""
    for fraction, stage, result in plan_steps(rig, equilibria=FOR_CHOICES[target], rows=rows,
                                              stroke_weight=weight):
        if result is None:
            yield 0.95 * fraction, stage
    yield 0.97, "sensitivity and run-up advice"
    yield 1.0, plan_dict(result, rig)


@command("plan", "the speed and stroke that hold with the most margin over the rig's spreads",
         _plan_arguments)
def _cmd_plan(args) -> int:
    rig, warnings = rig_of_args(_no_override(args))
    weight = quantity(args.stroke_weight, "plain", "--stroke-weight", above=0.0) or 1.0
    _check(args.rows, weight, "--rows", "--stroke-weight")
    show = progress(sys.stderr.isatty() and not args.json)
    for fraction, what in _steps(rig, args.target, weight, args.rows):
        if fraction < 1.0:
            show(fraction, what)
    if show.enabled:
        print(file=sys.stderr)
    if args.json:
        print(json.dumps(jsonable(what), indent=2, allow_nan=False))
    else:
        sys.stdout.write(plan_text(what, warnings, args.units))
    return 0


def _no_override(args):
    args.speed = args.stroke = None  # the plan moves the operating point itself
    return args


def _request(request: dict):
    rig, warnings = rig_of(request)
    target = request.get("for", "inverted")
    if not isinstance(target, str) or target not in FOR_CHOICES:
        raise RigError([Problem("for", f"{str(target)[:40]!r} is not allowed: use inverted, "
                                       "hanging or both")])
    r = Reader(request)
    weight = r.field("stroke_weight", "plain", 1.0, above=0.0)
    rows = r.field("rows", "plain", None, minimum=0.0)
    r.done()
    if rows is not None and rows <= 1e6 and rows == int(rows):
        rows = int(rows)
    _check(rows, weight, "rows", "stroke_weight")
    return rig, warnings, target, weight, rows, units_of(request)


@op("plan")
def _op_plan(request: dict) -> dict:
    rig, warnings, target, weight, rows, units = _request(request)
    result = None
    for _, result in _steps(rig, target, weight, rows):
        pass
    return {"result": result, "report_text": plan_text(result, warnings, units),
            "cautions": list(CAUTIONS)}


@job_kind("plan")
def plan_job(rig, warnings, request: dict):
    """The request checked at once, then a generator of (fraction, partial reply); its last
    reply is the ``plan`` op's."""
    _, _, target, weight, rows, units = _request(request)

    def steps():
        for fraction, what in _steps(rig, target, weight, rows):
            if fraction < 1.0:
                yield fraction, {"stage": what}
            else:
                yield 1.0, {"result": what, "report_text": plan_text(what, warnings, units),
                            "cautions": list(CAUTIONS), "stage": "done"}
    return steps()
