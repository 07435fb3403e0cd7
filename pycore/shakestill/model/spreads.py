"""Spreads: how far each number of a real rig may differ from its rig file.

The rig file's optional top-level ``spreads`` object maps the path of a number
in the file to its spread, written as people write tolerances:

    "+-2%"        nominal x (1 - 0.02) .. nominal x (1 + 0.02)
    "+-0.3 mm"    nominal - 0.3 mm .. nominal + 0.3 mm (the unit of that number's kind)
    "0.5x..2x"    nominal x 0.5 .. nominal x 2

Paths are the file's own: ``links[0].length_m``, ``links[1].point_masses[0].at_m``,
``drive.speed_rpm``, ``drive.stroke_m``, ``g_m_s2``. A spread on the speed or the
stroke says the operating point itself wanders (motor regulation, a stroke set
by hand); the others say the rig differs from its drawing. The limits bound a
search and carry no spread. The planner (``equilibria.plan``) works over the box
of every number between its low and high end.
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass, replace

from .rig import GRAVITY_REACH, MAX_CRANK_RATIO, MIN_LINK_M, REACH, outside_reach
from .units import UnitError, parse_quantity

# The kind of unit each number of the file is read in (as rigfile reads it).
NUMBER_KINDS = {
    "g_m_s2": "acceleration", "air_density_kg_m3": "plain",
    "length_m": "length", "rod_mass_kg": "mass", "extra_inertia_kg_m2": "inertia",
    "joint_damping_N_m_s": "damping", "joint_friction_N_m": "torque",
    "mass_kg": "mass", "at_m": "length", "drag_coefficient": "plain", "frontal_area_m2": "area",
    "stroke_m": "length", "rod_length_m": "length", "speed_rpm": "speed",
    "carriage_mass_kg": "mass", "samples_m": "length",
}
# Where each number's ends may lie, as the rig file allows the number itself (rigread):
# (smallest non-zero or None, largest) by kind, and whether the number must stay above 0.
_REACH_OF = {"length_m": (MIN_LINK_M, REACH["length"][1]),
             "rod_length_m": (MIN_LINK_M, REACH["length"][1]),
             "samples_m": (None, REACH["length"][1]), "g_m_s2": GRAVITY_REACH}
_POSITIVE = ("length_m", "speed_rpm", "g_m_s2", "rod_length_m")
OPERATING_PATHS = ("drive.speed_rpm", "drive.stroke_m")  # spreads that move the point itself
MAX_SPREADS = 24  # uncertain numbers in one file (the set's corners grow as 2^n)
MAX_TEXT = 40  # characters of one spread's text ("+-0.3 mm" is 8)
MAX_PATH = 60  # characters of one path (links[2].point_masses[9].frontal_area_m2 is 42)
MIN_FACTOR, MAX_FACTOR = 0.01, 100.0  # a factor range wider than 100x either way is no tolerance
_PLUS_MINUS = re.compile(r"^\s*(?:\+-|±|\+/-)\s*(\S.*)$")
_FACTORS = re.compile(r"^\s*([0-9.eE+-]+)\s*x\s*\.\.\s*([0-9.eE+-]+)\s*x\s*$")
_STEP = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)(?:\[(0|[1-9][0-9]{0,5})\])?$")
WRITTEN = "write a spread as \"+-2%\", \"+-0.3 mm\" (a unit of that number) or \"0.5x..2x\""


@dataclass(frozen=True)
class Spread:
    """One uncertain number: its path, the text as written, and how it widens the nominal."""

    path: str
    text: str
    mode: str  # "relative" (+- fraction), "absolute" (+- SI amount), "factor" (low x .. high x)
    low: float  # relative/absolute: the +- amount; factor: the low factor
    high: float  # factor: the high factor; otherwise equal to ``low``

    def range(self, nominal: float) -> tuple[float, float]:
        """(low end, high end) of this number around ``nominal``."""
        if self.mode == "relative":
            a, b = nominal * (1 - self.low), nominal * (1 + self.low)
        elif self.mode == "absolute":
            a, b = nominal - self.low, nominal + self.low
        else:
            a, b = nominal * self.low, nominal * self.high
        return (min(a, b), max(a, b))


def split_path(path: str) -> list[tuple[str, int | None]] | None:
    """"links[0].length_m" -> [("links", 0), ("length_m", None)], or None if malformed."""
    steps = []
    for part in path.split("."):
        m = _STEP.match(part)
        if not m:
            return None
        steps.append((m.group(1), None if m.group(2) is None else int(m.group(2))))
    return steps


def _lookup(data, path: str):
    """The raw value a path names in the rig file's JSON object, or raise KeyError."""
    steps = split_path(path)
    if not steps:
        raise KeyError(path)
    node = data
    for key, index in steps:
        if not isinstance(node, dict) or key not in node:
            raise KeyError(path)
        node = node[key]
        if index is not None:
            if not isinstance(node, list) or not 0 <= index < len(node):
                raise KeyError(path)
            node = node[index]
    return node


def _where(path) -> str:
    """The problem's path: ``spreads.links[0].length_m`` for a path of the file's form, else
    the JSON path of the key (quoted, cut short)."""
    if isinstance(path, str) and len(path) <= MAX_PATH and split_path(path):
        return f"spreads.{path}"
    key, cut = str(path)[:40], len(str(path)) > 40
    while len(json.dumps(key, ensure_ascii=False)) > 40:  # escapes count too
        key, cut = key[:-1], True
    return "spreads[" + json.dumps(key + ("..." if cut else ""), ensure_ascii=False) + "]"


def _show(value) -> str:
    try:
        text = json.dumps(value)
    except (TypeError, ValueError):
        text = repr(value)
    return text if len(text) <= 40 else text[:37] + "..."


def read_spreads(data: dict, fail) -> tuple[Spread, ...]:
    """Validate ``data["spreads"]``; every problem goes to ``fail(path, message)``."""
    raw = data.get("spreads")
    if not isinstance(raw, dict):
        fail("spreads", f"{_show(raw)} is not allowed: expected an object mapping "
                        "the path of a number to its spread, e.g. "
                        "{\"links[0].length_m\": \"+-2%\"}")
        return ()
    if len(raw) > MAX_SPREADS:
        fail("spreads", f"{len(raw)} spreads are not allowed: give at most {MAX_SPREADS} "
                        "(the planner works over every corner of their box)")
        return ()
    out = []
    for path, text in raw.items():
        where = _where(path)
        if not where.startswith("spreads."):
            fail(where, f"{_show(path)} names no number in this rig file: use a path such as "
                        "links[0].length_m, links[0].point_masses[0].at_m, drive.speed_rpm")
            continue
        leaf = split_path(path)[-1][0]
        if path.startswith("limits"):
            fail(where, "the limits bound the search and carry no spread; give spreads of the "
                        "rig's numbers (links, drive, g_m_s2)")
            continue
        try:
            value = _lookup(data, path)
        except KeyError:
            fail(where, f"{path!r} names no number in this rig file: use a path such as "
                        "links[0].length_m, links[0].point_masses[0].at_m, drive.speed_rpm "
                        "(a number left at its default must be written in the file first)")
            continue
        if leaf not in NUMBER_KINDS or isinstance(value, (dict, list, bool)) or value is None:
            fail(where, f"{path!r} names no number in this rig file (it holds "
                        f"{_show(value)})")
            continue
        spread = parse_spread(text, NUMBER_KINDS[leaf], where, fail)
        if spread is not None:
            out.append(replace(spread, path=path))
    return tuple(out)


def _float(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        return math.nan


def parse_spread(text, kind: str, where: str, fail) -> Spread | None:
    """One spread's text, or None after ``fail`` has been told what is wrong."""
    if not isinstance(text, str):
        fail(where, f"{_show(text)} is not allowed: {WRITTEN}")
        return None
    if len(text) > MAX_TEXT:
        fail(where, f"{_show(text)} is not allowed: a spread is a few characters; {WRITTEN}")
        return None
    m = _FACTORS.match(text)
    if m:
        lo, hi = _float(m.group(1)), _float(m.group(2))
        if not (math.isfinite(lo) and math.isfinite(hi) and MIN_FACTOR <= lo <= 1 <= hi
                <= MAX_FACTOR):
            fail(where, f"{text!r} is not allowed: the factors must be finite with "
                        f"0 < low <= 1 <= high, low at least {MIN_FACTOR:g} and high at most "
                        f"{MAX_FACTOR:g}")
            return None
        return Spread("", text, "factor", lo, hi)
    m = _PLUS_MINUS.match(text)
    if not m:
        fail(where, f"{text!r} is not allowed: {WRITTEN}")
        return None
    amount = m.group(1).strip()
    if amount.endswith("%"):
        frac = _float(amount[:-1]) / 100.0
        if not (math.isfinite(frac) and 0 <= frac < 1):
            fail(where, f"{text!r} is not allowed: a per cent spread is from 0% to below 100%")
            return None
        return Spread("", text, "relative", frac, frac)
    try:
        size = parse_quantity(amount, kind)
    except UnitError as exc:
        fail(where, f"{text!r} is not allowed: {exc}")
        return None
    if not (math.isfinite(size) and size >= 0):
        fail(where, f"{text!r} is not allowed: the amount must be finite and at least 0")
        return None
    return Spread("", text, "absolute", size, size)


def spreads_to_dict(spreads: tuple[Spread, ...]) -> dict:
    """The ``spreads`` object as written (its texts are kept, so a file round-trips)."""
    return {s.path: s.text for s in spreads}


def number_at(rig, path: str) -> float:
    """The rig's number (SI) at a rig-file path."""
    node = rig
    for key, index in split_path(path):
        node = getattr(node, key)
        if index is not None:
            node = node[index]
    return float(node)


def with_number(rig, path: str, value: float):
    """The rig with the number at ``path`` replaced (frozen dataclasses all the way down)."""
    def put(node, steps):
        (key, index), rest = steps[0], steps[1:]
        child = getattr(node, key)
        if index is None:
            new = float(value) if not rest else put(child, rest)
        else:
            items = list(child)
            items[index] = float(value) if not rest else put(items[index], rest)
            new = tuple(items)
        return replace(node, **{key: new})
    return put(rig, split_path(path))


def check_ranges(rig, fail, warn=None) -> None:
    """Every spread keeps its number where the rig file allows the number itself: no negative
    masses, nothing past the magnitudes the methods are built for (``REACH``), a crank's
    stroke inside what the shortest rod resolves. ``warn`` hears of a mass taken past its
    link's end (the model takes it as a mass on an extension)."""
    by_path = {s.path: s for s in rig.spreads}
    failed = set()
    for s in rig.spreads:
        leaf = split_path(s.path)[-1][0]
        low, high = s.range(number_at(rig, s.path))
        where = f"spreads.{s.path}"
        if leaf != "samples_m" and (low < 0 or (leaf in _POSITIVE and low <= 0)):
            fail(where, f"{s.text!r} is not allowed: it takes this number down to "
                        f"{low:g} (SI), below what the rig file allows")
            failed.add(s.path)
            continue
        kind = NUMBER_KINDS[leaf]
        for end in (low, high):
            allowed = outside_reach(end, kind, reach=_REACH_OF.get(leaf),
                                    zero_allowed=leaf not in _POSITIVE)
            if allowed:
                fail(where, f"{s.text!r} is not allowed: it takes this number to {end:g} (SI), "
                            f"{allowed}")
                failed.add(s.path)
                break
    d = rig.drive
    if d.waveform == "crank":
        stroke = _end(by_path.get("drive.stroke_m"), d.stroke_m, 1)
        rod = _end(by_path.get("drive.rod_length_m"), d.rod_length_m, 0)
        ends = by_path.keys() & {"drive.stroke_m", "drive.rod_length_m"}
        if stroke / 2 > MAX_CRANK_RATIO * rod and ends and not ends & failed:
            name = "drive.rod_length_m" if "drive.rod_length_m" in by_path else "drive.stroke_m"
            fail(f"spreads.{name}", f"{by_path[name].text!r} is outside what this method can "
                                    f"resolve: a stroke of {stroke:g} m on a rod of {rod:g} m "
                                    f"puts the crank past {MAX_CRANK_RATIO:g} of its rod")
    for i, link in enumerate(rig.links):
        length = _end(by_path.get(f"links[{i}].length_m"), link.length_m, 0)
        for j, p in enumerate(link.point_masses):
            path = f"links[{i}].point_masses[{j}].at_m"
            at = _end(by_path.get(path), p.at_m, 1)
            if warn is not None and at > length * (1 + 1e-12) and (
                    path in by_path or f"links[{i}].length_m" in by_path):
                warn(f"spreads.{path}" if path in by_path else f"spreads.links[{i}].length_m",
                     f"the spreads put this mass {at:g} m from its joint on a link that may be "
                     f"{length:g} m long: the planner takes it as a mass on an extension")


def _end(spread, nominal: float, which: int) -> float:
    """The low (0) or high (1) end of a number's spread (the nominal without one)."""
    return nominal if spread is None else spread.range(nominal)[which]
