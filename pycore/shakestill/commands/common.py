"""Helpers the subject modules share: reading a rig from where the user gave it, options and
request fields into SI with every problem named, progress and output files."""

from __future__ import annotations

import json
import math
import sys
from dataclasses import replace

from ..model import share
from ..model.demo import demo_rig_dict
from ..model.rig import MAX_TILT_DEG, Problem, RigError, outside_reach, with_operating_point
from ..model.rigfile import dumps_rig, loads_rig, rig_from_dict
from ..model.safejson import MAX_TEXT_CHARS, decode_text
from ..model.units import UnitError, allowed_units, parse_quantity
from ..render.shown import SYSTEMS, check_units

# ----------------------------------------------------------------------------- command line


def load_source(source: str | None):
    """(rig, warnings) from a path, '-' (standard input), a share link, or the demo when absent."""
    if source is None or source == "demo":
        return rig_from_dict(demo_rig_dict(), with_warnings=True)
    if source.startswith(share.PREFIX) or f"#{share.PREFIX}" in source:
        data, _ = share.decode(source)
        return rig_from_dict(data, with_warnings=True)
    if source == "-":
        return loads_rig(decode_text(sys.stdin.buffer.read(), "(stdin)"), with_warnings=True)
    return loads_rig(read_text(source, "(file)"), with_warnings=True)


def read_text(path: str, where: str) -> str:
    """A file's text (UTF-8, with or without a byte-order mark), or a RigError at ``where``."""
    try:
        with open(path, "rb") as fh:
            data = fh.read(MAX_TEXT_CHARS * 4 + 1)
    except OSError as exc:
        raise RigError([Problem(where, f"{path!r} cannot be read: {exc.strerror}")]) from None
    if len(data) > MAX_TEXT_CHARS * 4:
        raise RigError([Problem(where, f"{path!r} is far too large to be read here")])
    return decode_text(data, where)


def override(rig, args):
    """The rig at the speed and stroke of ``--speed`` / ``--stroke``, when given."""
    problems = []
    speed = stroke = None
    if args.speed is not None:
        try:
            speed = parse_quantity(args.speed, "speed")
            if not speed > 0:
                raise UnitError("it must be greater than 0 rpm")
        except UnitError as exc:
            problems.append(Problem("--speed", f"{args.speed!r} is not allowed: {exc}"))
    if args.stroke is not None:
        try:
            stroke = parse_quantity(args.stroke, "length")
            if not stroke >= 0:
                raise UnitError("it must be at least 0 m")
        except UnitError as exc:
            problems.append(Problem("--stroke", f"{args.stroke!r} is not allowed: {exc}"))
    if problems:
        raise RigError(problems)
    if speed is None and stroke is None:
        return rig
    # re-validate so that a crank stroke beyond the rod is caught with its field named
    data = json.loads(dumps_rig(with_operating_point(rig, speed_rpm=speed, stroke_m=stroke)))
    return rig_from_dict(data, with_warnings=True)[0]


def rig_of_args(args):
    """(rig, warnings) of a command's RIG argument with its speed and stroke options."""
    rig, warnings = load_source(args.rig)
    return override(rig, args), warnings


def quantity(text: str | None, kind: str, option: str, *, minimum: float | None = None,
             above: float | None = None):
    """An option's value in SI, or a RigError naming the option and what is allowed."""
    if text is None:
        return None
    try:
        value = parse_quantity(text, kind)
    except UnitError as exc:
        raise RigError([Problem(option, f"{text!r} is not allowed: {exc}")]) from None
    if above is not None and not value > above:
        raise RigError([Problem(option, f"{text!r} is not allowed: it must be above {above:g}")])
    if minimum is not None and not value >= minimum:
        raise RigError([Problem(option, f"{text!r} is not allowed: it must be at least "
                                        f"{minimum:g}")])
    allowed = outside_reach(value, kind)
    if allowed:
        raise RigError([Problem(option, f"{text!r} is {allowed}")])
    return value


def tilted(rig, text: str | None, option: str = "--tilt"):
    """The rig with its drive axis tilted by ``text`` (the rig file's -90..90 deg rule)."""
    if text is None:
        return rig
    try:
        tilt = parse_quantity(text, "angle_deg")
    except UnitError as exc:
        raise bad(option, text, str(exc)) from None
    if not -MAX_TILT_DEG <= tilt <= MAX_TILT_DEG:  # NaN fails this too
        raise bad(option, text, f"the drive axis tilts by -{MAX_TILT_DEG:g} to "
                                f"{MAX_TILT_DEG:g} deg in the swing plane")
    tilt = quantity(text, "angle_deg", option)  # a denormal is refused by REACH
    return replace(rig, drive=replace(rig.drive, axis_tilt_deg=tilt,
                                      given=rig.drive.given | {"axis_tilt_deg"}))


def bad(option: str, text: str, allowed: str) -> RigError:
    return RigError([Problem(option, f"{text!r} is not allowed: {allowed}")])


def progress(enabled: bool):
    """Progress on standard error (a terminal only), overwriting one line."""
    def show(fraction: float, words: str) -> None:
        if enabled:
            print(f"\r{words}: {fraction * 100:5.1f}%", end="", file=sys.stderr, flush=True)
    show.enabled = enabled
    return show


def write(path: str, text: str) -> None:
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(text)


def units_argument(p) -> None:
    """--units: the words and pictures in metric or imperial (JSON stays SI)."""
    p.add_argument("--units", choices=SYSTEMS, default="metric",
                   help="units of the report and pictures: metric (mm, kg, N) or imperial "
                        "(in, lb, lbf); --json stays SI")


def common_arguments(p) -> None:
    """RIG, --speed, --stroke and --json, as most commands take them."""
    p.add_argument("rig", nargs="?", metavar="RIG")
    p.add_argument("--speed", help="move the operating point's speed, e.g. 1800rpm")
    p.add_argument("--stroke", help="move the operating point's stroke, e.g. 25mm")
    p.add_argument("--json", action="store_true", help="print the result as JSON")


# ----------------------------------------------------------------------------- bridge requests


def problems_json(items) -> list[dict]:
    return [{"path": p.path, "message": p.message} for p in items]


def units_of(request: dict) -> str:
    """A request's display ``units`` ("metric" by default or "imperial"), or a named problem."""
    units = request.get("units", "metric")
    try:
        return check_units(units)
    except ValueError as err:  # the words are check_units' own, less its "units: " prefix
        raise RigError([Problem("units", str(err).removeprefix("units: "))]) from None


def rig_of(request: dict):
    """(rig, warnings) of a request's ``rig``."""
    if "rig" not in request:
        raise RigError([Problem("rig", "the request carries no rig")])
    return rig_from_dict(request["rig"], with_warnings=True)


class Reader:
    """Reads request fields into SI, collecting every problem with its path."""

    def __init__(self, request: dict):
        self.request, self.problems = request, []

    def quantity(self, where: str, raw, kind: str, *, minimum=None, above=None):
        if raw is None:
            self.problems.append(Problem(where, "is required: a number, or text with a unit "
                                                f"({allowed_units(kind) or 'no unit'})"))
            return None
        try:
            value = parse_quantity(raw, kind)
        except UnitError as exc:
            self.problems.append(Problem(where, f"{raw!r} is not allowed: {exc}"))
            return None
        if not math.isfinite(value) or (minimum is not None and value < minimum) or (
                above is not None and value <= above):
            bound = (f"at least {minimum:g}" if minimum is not None else
                     f"above {above:g}" if above is not None else "finite")
            self.problems.append(Problem(where, f"{raw!r} is not allowed: it must be {bound}"))
            return None
        allowed = outside_reach(value, kind)
        if allowed:
            self.problems.append(Problem(where, f"{raw!r} is {allowed}"))
            return None
        return value

    def field(self, key: str, kind: str, default=None, **bounds):
        if key not in self.request or self.request[key] is None:
            return default
        return self.quantity(key, self.request[key], kind, **bounds)

    def values(self, where: str, raw, kind: str, n: int):
        if raw is None:
            return None
        if not isinstance(raw, list) or len(raw) != n:
            self.problems.append(Problem(where, f"{raw!r} is not allowed: give a list of {n} "
                                                "value(s), one per link"))
            return None
        out = [self.quantity(f"{where}[{i}]", v, kind) for i, v in enumerate(raw)]
        return None if None in out else tuple(out)

    def items(self, key: str) -> list:
        raw = self.request.get(key) or []
        if not isinstance(raw, list) or not all(isinstance(x, dict) for x in raw):
            self.problems.append(Problem(key, "must be a list of objects"))
            return []
        return raw

    def done(self) -> None:
        if self.problems:
            raise RigError(self.problems)
