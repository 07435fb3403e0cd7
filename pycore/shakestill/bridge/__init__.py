"""JSON in, JSON out: the one entry point the page's worker calls.

``handle(request_json) -> reply_json`` never raises: bad input becomes
``{"ok": false, "problems": [...]}`` and an internal fault
``{"ok": false, "error": "..."}``. The ops are registered by their subjects in
``commands``; see DEVELOPERS.md for their fields.
"""

from __future__ import annotations

import json
import traceback

from ..commands import OPS
from ..commands.common import problems_json
from ..model.rig import RigError
from ..model.safejson import loads_json
from ..render.report import jsonable


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
        return {"ok": False, "problems": problems_json(exc.problems)}
    except Exception as exc:  # never throw across the bridge; say what broke
        return {"ok": False, "error": f"{type(exc).__name__}: {exc}",
                "trace": traceback.format_exc(limit=6)}
    return {"ok": True, **reply}


def handle(request_json: str) -> str:
    """``call`` on a request's JSON text, read with bounds (depth, sizes, finite numbers)."""
    if not isinstance(request_json, str):
        reply = {"ok": False, "error": "the request is not JSON text"}
    else:
        try:
            reply = call(loads_json(request_json, "(request)"))
        except RigError as exc:
            reply = {"ok": False, "problems": problems_json(exc.problems)}
    return json.dumps(jsonable(reply), allow_nan=False)
