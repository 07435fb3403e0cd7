"""Rig files and links: ``shakestill demo`` and ``link``; ops demo, validate, schematic,
version, share_encode and share_decode."""

from __future__ import annotations

import json
import math
import sys

from ..model.version import VERSION as __version__
from ..model import share
from ..model.demo import demo_rig_dict
from ..model.rig import Problem, RigError
from ..model.rigfile import dumps_rig, rig_to_dict
from ..render.schematic import schematic
from .common import load_source, problems_json, rig_of, units_of
from .table import command, op

MAX_LEAN_DRAWN_DEG = 90.0  # the held orbit leans less than horizontal (orbit.FAR_LEAN)


def _demo_arguments(p) -> None:
    p.add_argument("-o", "--output", help="write it to this file")


@command("demo", "print the built-in demo rig file", _demo_arguments)
def _cmd_demo(args) -> int:
    text = json.dumps(demo_rig_dict(), indent=2) + "\n"
    if args.output:
        with open(args.output, "w", encoding="utf-8") as fh:
            fh.write(text)
    else:
        sys.stdout.write(text)
    return 0


def _link_arguments(p) -> None:
    p.add_argument("rig", nargs="?", metavar="RIG")


@command("link", "print a share-link fragment for a rig", _link_arguments)
def _cmd_link(args) -> int:
    rig, _ = load_source(args.rig)
    print("#" + share.encode(json.loads(dumps_rig(rig))))
    return 0


@op("demo")
def _op_demo(request: dict) -> dict:
    return {"rig": demo_rig_dict()}


@op("validate")
def _op_validate(request: dict) -> dict:
    rig, warnings = rig_of(request)
    return {"rig": rig_to_dict(rig), "warnings": problems_json(warnings)}


@op("schematic")
def _op_schematic(request: dict) -> dict:
    """``lean_deg`` (optional): the check's inverted lean per link, to draw the links at;
    ``units`` (optional, "metric" or "imperial"): of the scale bar and the masses' notes."""
    rig, _ = rig_of(request)
    lean = request.get("lean_deg")
    if lean is not None:
        ok = (isinstance(lean, list) and len(lean) == rig.n_links and all(
            isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
            and abs(v) <= MAX_LEAN_DRAWN_DEG for v in lean))
        if not ok:
            raise RigError([Problem("lean_deg", f"{lean!r} is not allowed: one angle per link "
                                                f"({rig.n_links}), each -{MAX_LEAN_DRAWN_DEG:g} "
                                                f"to {MAX_LEAN_DRAWN_DEG:g} deg")])
        lean = tuple(float(v) for v in lean)
    return {"svg": schematic(rig, lean_deg=lean, units=units_of(request))}


@op("version")
def _op_version(request: dict) -> dict:
    return {"version": __version__}


@op("share_encode")
def _op_share_encode(request: dict) -> dict:
    view = request.get("view") or {}
    if not isinstance(view, dict):
        raise RigError([Problem("view", "the view state must be an object")])
    result = request.get("result")
    if result is not None and not isinstance(result, dict):
        raise RigError([Problem("result", "the check result must be an object")])
    return {"fragment": share.encode(request.get("rig"), view, result)}


@op("share_decode")
def _op_share_decode(request: dict) -> dict:
    rig, view = share.decode(request.get("fragment", ""))
    return {"rig": rig, "view": view}
