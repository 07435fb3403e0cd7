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
from .rig import Problem, RigError, rig_from_dict, rig_to_dict
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


OPS = {
    "demo": _op_demo,
    "validate": _op_validate,
    "check": _op_check,
    "schematic": _op_schematic,
    "version": _op_version,
    "share_encode": _op_share_encode,
    "share_decode": _op_share_decode,
}


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
