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
from .common import Reader, progress, quantity, rig_of, rig_of_args
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


def _steps(rig, target: str, weight: float, rows):
    """(fraction, stage) while working; the plan's plain data at the end (fraction 1)."""
    if rows is not None and not 4 <= rows <= 400:
        raise RigError([Problem("rows", f"{rows!r} is not allowed: use 4 to 400 rows")])
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
    show = progress(sys.stderr.isatty() and not args.json)
    for fraction, what in _steps(rig, args.target, weight, args.rows):
        if fraction < 1.0:
            show(fraction, what)
    if show.enabled:
        print(file=sys.stderr)
    if args.json:
        print(json.dumps(jsonable(what), indent=2, allow_nan=False))
    else:
        sys.stdout.write(plan_text(what, warnings))
    return 0


def _no_override(args):
    args.speed = args.stroke = None  # the plan moves the operating point itself
    return args


def _request(request: dict):
    rig, warnings = rig_of(request)
    target = request.get("for", "inverted")
    if target not in FOR_CHOICES:
        raise RigError([Problem("for", f"{target!r} is not allowed: use inverted, hanging or "
                                       "both")])
    r = Reader(request)
    weight = r.field("stroke_weight", "plain", 1.0, above=0.0)
    rows = r.field("rows", "plain", None, minimum=4.0)
    r.done()
    return rig, warnings, target, weight, None if rows is None else int(rows)


@op("plan")
def _op_plan(request: dict) -> dict:
    rig, warnings, target, weight, rows = _request(request)
    result = None
    for _, result in _steps(rig, target, weight, rows):
        pass
    return {"result": result, "report_text": plan_text(result, warnings),
            "cautions": list(CAUTIONS)}


@job_kind("plan")
def plan_job(rig, warnings, request: dict):
    """Yields (fraction, partial reply); the last reply is the ``plan`` op's."""
    _, _, target, weight, rows = _request(request)
    for fraction, what in _steps(rig, target, weight, rows):
        if fraction < 1.0:
            yield fraction, {"stage": what}
        else:
            yield 1.0, {"result": what, "report_text": plan_text(what, warnings),
                        "cautions": list(CAUTIONS), "stage": "done"}
