"""JSON in, JSON out: the one entry point the page's worker calls.

``handle(request_json) -> reply_json`` never raises: bad input becomes
``{"ok": false, "problems": [...]}`` and an internal fault
``{"ok": false, "error": "..."}``. See DEVELOPERS.md for the ops.
"""

from __future__ import annotations

import json
import traceback

from . import __version__, share
from .check import check
from .demo import demo_rig_dict
from .report import CAUTIONS, jsonable, report_text
from .rig import Problem, RigError, rig_from_dict, rig_to_dict, with_operating_point
from .svg import schematic


def _problems(items) -> list[dict]:
    return [{"path": p.path, "message": p.message} for p in items]


def _rig(request: dict):
    if "rig" not in request:
        raise RigError([Problem("rig", "the request carries no rig")])
    return rig_from_dict(request["rig"], with_warnings=True)


def _op_demo(request: dict) -> dict:
    return {"rig": demo_rig_dict()}


def _op_validate(request: dict) -> dict:
    rig, warnings = _rig(request)
    return {"rig": rig_to_dict(rig), "warnings": _problems(warnings)}


def _op_check(request: dict) -> dict:
    rig, warnings = _rig(request)
    result = check(rig)
    return {"rig": rig_to_dict(rig), "result": result, "report_text": report_text(result, warnings),
            "warnings": _problems(warnings), "cautions": list(CAUTIONS)}


def _op_schematic(request: dict) -> dict:
    rig, _ = _rig(request)
    return {"svg": schematic(rig)}


def _op_version(request: dict) -> dict:
    return {"version": __version__}


def _op_share_encode(request: dict) -> dict:
    view = request.get("view") or {}
    if not isinstance(view, dict):
        raise RigError([Problem("view", "the view state must be an object")])
    return {"fragment": share.encode(request.get("rig"), view)}


def _op_share_decode(request: dict) -> dict:
    rig, view = share.decode(request.get("fragment", ""))
    return {"rig": rig, "view": view}


def _op_point(request: dict) -> dict:
    """Exact stability of both equilibria at one (speed, stroke): the chart's read-out."""
    from .floquet import stability
    from .units import UnitError, parse_quantity
    from .chart import stroke_for_peak_accel
    from .drive import peak_accel_m_s2
    rig, _ = _rig(request)
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


def _op_runup(request: dict) -> dict:
    from .runup import runup
    rig, _ = _rig(request)
    try:
        result = runup(rig, rate_rpm_s=float(request.get("rate_rpm_s", 0)),
                       start_rpm=float(request.get("start_rpm", 0.0)),
                       end_rpm=request.get("end_rpm"),
                       factor=float(request.get("factor", 10.0)))
    except (TypeError, ValueError) as exc:
        raise RigError([Problem("runup", str(exc))]) from None
    return {"result": result}


# Long work runs as a job: start it, then call job_step repeatedly (each call does about
# budget_ms of work and returns the picture so far), or job_cancel. The worker stays free
# to take other requests between steps.
_JOBS: dict[int, dict] = {}
_NEXT_JOB = [1]


def _chart_job(rig, request):
    from .chart import chart_steps
    rows = request.get("rows")
    return chart_steps(rig, rows=None if rows is None else int(rows),
                       y_axis=request.get("y_axis", "stroke"))


def _op_job_start(request: dict) -> dict:
    kind = request.get("kind")
    if kind != "chart":
        raise RigError([Problem("kind", f"{kind!r} is not a job this core runs (chart)")])
    rig, _ = _rig(request)
    try:
        steps = _chart_job(rig, request)
        job = _NEXT_JOB[0]
        _NEXT_JOB[0] += 1
        _JOBS[job] = {"kind": kind, "rig": rig, "steps": steps, "last": None}
    except ValueError as exc:
        raise RigError([Problem(kind, str(exc))]) from None
    return {"job": job}


def _op_job_step(request: dict) -> dict:
    import time
    from .chart import chart_dict, render
    job = _JOBS.get(request.get("job"))
    if job is None:
        raise RigError([Problem("job", "no such job (finished or cancelled)")])
    budget = float(request.get("budget_ms", 150)) / 1000.0
    start = time.perf_counter()
    fraction, done = 0.0, False
    try:
        while time.perf_counter() - start < budget:
            fraction, job["last"] = next(job["steps"])
            done = job["last"].complete
            if done:
                break
    except StopIteration:
        done = True
    except ValueError as exc:
        _JOBS.pop(request.get("job"), None)
        raise RigError([Problem(job["kind"], str(exc))]) from None
    if done:
        _JOBS.pop(request.get("job"), None)
        fraction = 1.0
    reply = {"fraction": fraction, "done": done}
    if job["last"] is not None and (done or request.get("partial", True)):
        svg, axes = render(job["last"], job["rig"])
        reply.update({"svg": svg, "axes": axes, "chart": chart_dict(job["last"])})
    return reply


def _op_job_cancel(request: dict) -> dict:
    return {"cancelled": _JOBS.pop(request.get("job"), None) is not None}


OPS = {
    "point": _op_point,
    "runup": _op_runup,
    "job_start": _op_job_start,
    "job_step": _op_job_step,
    "job_cancel": _op_job_cancel,
    "demo": _op_demo,
    "validate": _op_validate,
    "check": _op_check,
    "schematic": _op_schematic,
    "version": _op_version,
    "share_encode": _op_share_encode,
    "share_decode": _op_share_decode,
}


# The motion ops (simulate, tolerance, loads and their jobs) live in their own module.
from .motion_bridge import OPS as _MOTION_OPS  # noqa: E402  (it reads this module's helpers)

OPS.update(_MOTION_OPS)
from .fit_bridge import OPS as _FIT_OPS  # noqa: E402

OPS.update(_FIT_OPS)


def call(request: dict) -> dict:
    """The same as ``handle`` on Python objects."""
    if not isinstance(request, dict):
        return {"ok": False, "error": "a request is a JSON object with an 'op'"}
    op = request.get("op")
    if op not in OPS:
        return {"ok": False, "error": f"unknown op {op!r}; known: {', '.join(sorted(OPS))}"}
    try:
        reply = OPS[op](request)
    except RigError as exc:
        return {"ok": False, "problems": _problems(exc.problems)}
    except Exception as exc:  # never throw across the bridge; say what broke
        return {"ok": False, "error": f"{type(exc).__name__}: {exc}",
                "trace": traceback.format_exc(limit=6)}
    return {"ok": True, **reply}


def handle(request_json: str) -> str:
    try:
        request = json.loads(request_json)
    except (TypeError, ValueError) as exc:
        reply = {"ok": False, "error": f"the request is not JSON: {exc}"}
    else:
        reply = call(request)
    return json.dumps(jsonable(reply), allow_nan=False)
