"""Bridge op and job for fitting the rig to a logged run (JSON in, JSON out).

Request fields: ``rig``; ``log`` (the log's text, see module ``logfile``);
``reference`` ("hanging", default, or "inverted": where the log's angles are
zero); ``parameters`` (names for ``fit.parameter_paths``, default
["damping"]); ``max_iterations`` (default 30); ``drive_stopped`` (true: a free
decay with the drive standing still, when the log has no speed column; else
the log's speed column or the rig's own speed). The reply carries the fit
(``result``, as ``shakestill fit --json``), the fitted rig as a rig file
(``fitted_rig``), its plot (``svg``, ``axes``) and the words.
"""

from __future__ import annotations

from .fit import MAX_ITERATIONS, fit_dict, fit_steps
from .logfile import REFERENCE_ANGLE, drive_stopped, read_angle_log
from .motion_report import fit_text
from .plots import fit_svg
from .report import CAUTIONS
from .rig import Problem, RigError, rig_to_dict


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


def fit_job(rig, warnings, request: dict):
    """Yields (fraction, partial reply); the last reply carries the fit."""
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
    svg, axes = fit_svg(res, f"{rig.title or 'Rig'}: logged and fitted angles")
    yield 1.0, {"stage": "done", "result": result, "fitted_rig": rig_to_dict(res.rig),
                "svg": svg, "axes": axes, "report_text": fit_text(result),
                "warnings": _bridge()._problems(warnings),
                "cautions": list(CAUTIONS)}


def _bridge():
    from . import bridge  # late: bridge.py merges OPS from this module when it loads
    return bridge


def _op_fit(request: dict) -> dict:
    reply = {}
    for _, reply in fit_job(*_bridge()._rig(request), request):
        pass
    return {k: v for k, v in reply.items() if k != "stage"}


OPS = {"fit": _op_fit}
