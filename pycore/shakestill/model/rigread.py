"""Reading a rig file's JSON object into the frozen dataclasses, validating every field.

Validation collects every problem with its JSON path, the value, the unit and
what is allowed, and raises them together. Unknown fields are kept (and
warned about) so that saving a loaded file gives the same file back.
"""

from __future__ import annotations

import json
import math
from typing import Any

from .rig import (AIR_DENSITY, FORMAT, GRAVITY_REACH, MAX_CRANK_RATIO, MAX_LINKS, MAX_TILT_DEG,
                  MIN_LINK_M, MIN_SAMPLES, REACH, STANDARD_GRAVITY, VERSION, WAVEFORMS, Drive, Limits, Link,
                  PointMass, Problem, Rig, RigError, outside_reach)
from .safejson import non_finite_problems
from .spreads import check_ranges, read_spreads
from .units import UnitError, parse_quantity

class _Reader:
    """Collects problems and warnings while turning JSON into dataclasses."""

    def __init__(self) -> None:
        self.problems: list[Problem] = []
        self.warnings: list[Problem] = []

    def fail(self, path: str, message: str) -> None:
        self.problems.append(Problem(path, message))

    def warn(self, path: str, message: str) -> None:
        self.warnings.append(Problem(path, message))

    def number(self, obj: dict, key: str, path: str, *, kind: str, unit: str,
               default: float | None = None, **bounds) -> float | None:
        """Read ``obj[key]`` as a number; a missing key without default is a problem."""
        where = f"{path}.{key}" if path else key
        if key not in obj:
            if default is None:
                self.fail(where, f"is required (a number in {unit})")
            return default
        return self.value(obj[key], where, kind=kind, unit=unit, **bounds)

    def value(self, raw: Any, where: str, *, kind: str, unit: str,
              minimum: float | None = None, exclusive_minimum: float | None = None,
              reach: tuple[float | None, float] | None = None) -> float | None:
        """Read a finite number (or a string with a unit) and check its bounds, then its
        magnitude against what the methods are built for (``reach``, default by kind)."""
        try:
            value = parse_quantity(raw, kind)
        except UnitError as exc:
            self.fail(where, f"{_show(raw)} is not allowed: {exc}")
            return None
        if not math.isfinite(value):
            self.fail(where, f"{_show(raw)} is not allowed: it must be a finite number in {unit}")
            return None
        if minimum is not None and value < minimum:
            self.fail(where, f"{_show(raw)} is not allowed: it must be at least {minimum:g} {unit}")
            return None
        if exclusive_minimum is not None and value <= exclusive_minimum:
            self.fail(where, f"{_show(raw)} is not allowed: it must be greater than "
                             f"{exclusive_minimum:g} {unit}")
            return None
        allowed = outside_reach(value, kind, reach=reach,
                                zero_allowed=exclusive_minimum is None)
        if allowed:
            self.fail(where, f"{_show(raw)} is {allowed}")
            return None
        return value

    def obj(self, value: Any, path: str) -> dict | None:
        if not isinstance(value, dict):
            self.fail(path, f"{_show(value)} is not allowed: expected an object {{...}}")
            return None
        return value

    def extras(self, obj: dict, known: tuple[str, ...], path: str) -> tuple:
        unknown = tuple((k, v) for k, v in obj.items() if k not in known)
        for key, _ in unknown:
            where = f"{path}.{key}" if path else key
            self.warn(where, "unknown field: kept as it is, but Shakestill does not use it")
        return unknown

    def pair(self, obj: dict, key: str, path: str, *, kind: str, unit: str,
             default: tuple[float, float]) -> tuple[float, float]:
        where = f"{path}.{key}"
        if key not in obj:
            return default
        raw = obj[key]
        if not isinstance(raw, list) or len(raw) != 2:
            self.fail(where, f"{_show(raw)} is not allowed: expected [low, high] in {unit}")
            return default
        lo = self.value(raw[0], f"{where}[0]", kind=kind, unit=unit, minimum=0.0)
        hi = self.value(raw[1], f"{where}[1]", kind=kind, unit=unit, minimum=0.0)
        if lo is None or hi is None:
            return default
        if not hi > lo:
            self.fail(where, f"{_show(raw)} is not allowed: the high end must be above the low end")
            return default
        return (lo, hi)


def _show(value: Any) -> str:
    text = json.dumps(value) if not isinstance(value, float) or math.isfinite(value) else str(value)
    return text if len(text) <= 60 else text[:57] + "..."


_RIG_KEYS = ("format", "version", "title", "g_m_s2", "air_density_kg_m3", "links", "drive",
             "limits", "spreads")
_LINK_KEYS = ("length_m", "rod_mass_kg", "point_masses", "extra_inertia_kg_m2",
              "joint_damping_N_m_s", "joint_friction_N_m")
_DRIVE_KEYS = ("waveform", "stroke_m", "rod_length_m", "speed_rpm", "samples_m",
               "carriage_mass_kg", "axis_tilt_deg", "side_stroke_m", "side_phase_deg")
_LIMIT_KEYS = ("speed_rpm", "stroke_m", "max_force_N", "max_power_W", "max_accel_m_s2",
               "max_lean_deg")
_POINT_KEYS = ("mass_kg", "at_m", "drag_coefficient", "frontal_area_m2")


def _read_link(r: _Reader, raw: Any, path: str) -> Link | None:
    obj = r.obj(raw, path)
    if obj is None:
        return None
    length = r.number(obj, "length_m", path, kind="length", unit="m", exclusive_minimum=0.0,
                      reach=(MIN_LINK_M, REACH["length"][1]))
    rod = r.number(obj, "rod_mass_kg", path, kind="mass", unit="kg", default=0.0, minimum=0.0)
    inertia = r.number(obj, "extra_inertia_kg_m2", path, kind="inertia", unit="kg m^2",
                       default=0.0, minimum=0.0)
    damping = r.number(obj, "joint_damping_N_m_s", path, kind="damping", unit="N m s",
                       default=0.0, minimum=0.0)
    friction = r.number(obj, "joint_friction_N_m", path, kind="torque", unit="N m",
                        default=0.0, minimum=0.0)
    points: list[PointMass] = []
    raw_points = obj.get("point_masses", [])
    if not isinstance(raw_points, list):
        r.fail(f"{path}.point_masses", f"{_show(raw_points)} is not allowed: expected a list")
        raw_points = []
    for j, raw_p in enumerate(raw_points):
        ppath = f"{path}.point_masses[{j}]"
        pobj = r.obj(raw_p, ppath)
        if pobj is None:
            continue
        mass = r.number(pobj, "mass_kg", ppath, kind="mass", unit="kg", minimum=0.0)
        at = r.number(pobj, "at_m", ppath, kind="length", unit="m", minimum=0.0)
        cd = r.number(pobj, "drag_coefficient", ppath, kind="plain", unit="(no unit)",
                      default=0.0, minimum=0.0)
        area = r.number(pobj, "frontal_area_m2", ppath, kind="area", unit="m^2", default=0.0,
                        minimum=0.0)
        extra = r.extras(pobj, _POINT_KEYS, ppath)
        if at is not None and length is not None and at > length * (1 + 1e-12):
            r.fail(f"{ppath}.at_m", f"{_show(pobj['at_m'])} is not allowed: a point mass must sit "
                                    f"on its link, from 0 to {length:g} m (the link's length)")
        elif None not in (mass, at, cd, area):
            points.append(PointMass(mass, at, cd, area,
                                    frozenset(k for k in _POINT_KEYS if k in pobj), extra))
    extra = r.extras(obj, _LINK_KEYS, path)
    if None in (length, rod, inertia, damping, friction):
        return None
    if rod + sum(p.mass_kg for p in points) <= 0.0:
        r.fail(path, "this link has no mass: give rod_mass_kg or a point mass greater than 0 kg")
        return None
    if rod * length ** 2 / 3 + sum(p.mass_kg * p.at_m ** 2 for p in points) + inertia <= 0.0:
        r.fail(path, "all of this link's mass sits at its joint, so its angle has no inertia: "
                     "move a point mass along the link (at_m above 0) or give rod_mass_kg")
        return None
    given = frozenset(k for k in _LINK_KEYS if k in obj)
    return Link(length, rod, tuple(points), inertia, damping, friction, given, extra)


def _read_samples(r: _Reader, obj: dict, path: str) -> tuple[float, ...] | None:
    where = f"{path}.samples_m"
    raw = obj.get("samples_m")
    if not isinstance(raw, list):
        r.fail(where, f"{_show(raw)} is not allowed: a samples drive needs a list of at least "
                      f"{MIN_SAMPLES} displacements in m over one cycle")
        return None
    if len(raw) < MIN_SAMPLES:
        r.fail(where, f"{len(raw)} samples are not enough: give at least {MIN_SAMPLES} "
                      "displacements in m, equally spaced over one cycle")
        return None
    values = []
    for i, item in enumerate(raw):
        v = r.value(item, f"{where}[{i}]", kind="length", unit="m",
                    reach=(None, REACH["length"][1]))  # a sample may be any small size
        if v is None:
            return None
        values.append(v)
    return tuple(values)


def _read_drive(r: _Reader, raw: Any) -> Drive | None:
    path = "drive"
    obj = r.obj(raw, path)
    if obj is None:
        return None
    waveform = obj.get("waveform")
    if waveform not in WAVEFORMS:
        r.fail("drive.waveform", f"{_show(waveform)} is not allowed: use one of "
                                 + ", ".join(f'"{w}"' for w in WAVEFORMS))
        return None
    speed = r.number(obj, "speed_rpm", path, kind="speed", unit="rpm", exclusive_minimum=0.0)
    carriage = r.number(obj, "carriage_mass_kg", path, kind="mass", unit="kg", default=0.0,
                        minimum=0.0)
    given = frozenset(k for k in _DRIVE_KEYS if k in obj)
    extra = r.extras(obj, _DRIVE_KEYS, path)
    path_off = _read_path_off(r, obj, path)
    if waveform == "samples":
        samples = _read_samples(r, obj, path)
        stroke = None
        if "stroke_m" in obj:
            stroke = r.number(obj, "stroke_m", path, kind="length", unit="m",
                              exclusive_minimum=0.0)
        elif samples is not None:
            stroke = max(samples) - min(samples)
            if stroke <= 0.0:
                r.fail("drive.samples_m", "the samples do not move (max - min is 0 m): give a "
                                          "waveform that moves, or give drive.stroke_m")
                stroke = None
        if None in (speed, samples, stroke, carriage, path_off):
            return None
        return Drive(waveform, speed, stroke, 0.0, samples, stroke, carriage, given, extra,
                     **path_off)
    stroke = r.number(obj, "stroke_m", path, kind="length", unit="m", minimum=0.0)
    rod = 0.0
    if waveform == "crank":
        rod = r.number(obj, "rod_length_m", path, kind="length", unit="m", exclusive_minimum=0.0,
                       reach=(MIN_LINK_M, REACH["length"][1]))
        if rod is not None and stroke is not None and not stroke / 2.0 < rod:
            r.fail("drive.rod_length_m", f"{_show(obj['rod_length_m'])} is not allowed: the "
                                         f"connecting rod must be longer than the crank radius "
                                         f"(stroke/2 = {stroke / 2:g} m)")
            rod = None
        elif rod is not None and stroke is not None and stroke / 2.0 > MAX_CRANK_RATIO * rod:
            r.fail("drive.stroke_m", f"{_show(obj['stroke_m'])} is outside what this method can "
                                     f"resolve: a crank radius above {MAX_CRANK_RATIO:g} of the "
                                     f"rod ({2 * MAX_CRANK_RATIO * rod:g} m of stroke here) makes "
                                     "the pivot's acceleration spike beyond the harmonics it "
                                     "resolves in seconds")
            stroke = None
    if None in (speed, stroke, rod, carriage, path_off):
        return None
    return Drive(waveform, speed, stroke, rod, (), 0.0, carriage, given, extra, **path_off)


def _read_path_off(r: _Reader, obj: dict, path: str) -> dict | None:
    """The drive's tilt and sideways motion (all optional, default 0: a vertical path)."""
    tilt = r.number(obj, "axis_tilt_deg", path, kind="angle_deg", unit="deg", default=0.0,
                    reach=(REACH["angle_deg"][0], math.inf))  # the -90..90 below says more
    side = r.number(obj, "side_stroke_m", path, kind="length", unit="m", default=0.0,
                    minimum=0.0)
    phase = r.number(obj, "side_phase_deg", path, kind="angle_deg", unit="deg", default=0.0)
    if tilt is not None and not -MAX_TILT_DEG <= tilt <= MAX_TILT_DEG:
        r.fail(f"{path}.axis_tilt_deg", f"{_show(obj['axis_tilt_deg'])} is not allowed: the "
                                        f"drive axis tilts from vertical by -{MAX_TILT_DEG:g} "
                                        f"to {MAX_TILT_DEG:g} deg in the swing plane")
        tilt = None
    if None in (tilt, side, phase):
        return None
    return {"axis_tilt_deg": tilt, "side_stroke_m": side, "side_phase_deg": phase}


def rig_from_dict(data: Any, *, with_warnings: bool = False):
    """Validate a rig file's JSON object into a ``Rig``.

    Returns the rig, or ``(rig, warnings)`` with ``with_warnings=True``.
    Raises ``RigError`` listing every problem found.
    """
    r = _Reader()
    obj = r.obj(data, "(rig)")
    if obj is None:
        raise RigError(r.problems)
    if obj.get("format") != FORMAT:
        r.fail("format", f"{_show(obj.get('format'))} is not allowed: a rig file has "
                         f'"format": "{FORMAT}"')
    version = obj.get("version")
    if version != VERSION or isinstance(version, bool):
        r.fail("version", f"{_show(version)} is not allowed: this Shakestill reads version "
                          f"{VERSION}")
    title = obj.get("title", "")
    if not isinstance(title, str):
        r.fail("title", f"{_show(title)} is not allowed: the title is text")
        title = ""
    g = r.number(obj, "g_m_s2", "", kind="acceleration", unit="m/s^2",
                 default=STANDARD_GRAVITY, exclusive_minimum=0.0, reach=GRAVITY_REACH)
    rho = r.number(obj, "air_density_kg_m3", "", kind="plain", unit="kg/m^3",
                   default=AIR_DENSITY, minimum=0.0)
    links: list[Link] = []
    raw_links = obj.get("links")
    if not isinstance(raw_links, list) or not 1 <= len(raw_links) <= MAX_LINKS:
        r.fail("links", f"{_show(raw_links)} is not allowed: give a list of 1 to {MAX_LINKS} links")
        raw_links = []
    for i, raw_link in enumerate(raw_links):
        link = _read_link(r, raw_link, f"links[{i}]")
        if link is not None:
            links.append(link)
    drive = _read_drive(r, obj.get("drive")) if "drive" in obj else None
    if "drive" not in obj:
        r.fail("drive", "is required: the drive's waveform, stroke and speed")
    limits = _read_limits(r, obj.get("limits", {}), drive)
    spreads = read_spreads(obj, r.fail) if "spreads" in obj else ()
    extra = r.extras(obj, _RIG_KEYS, "")
    # a NaN or infinity anywhere (unknown fields too) would be kept and written back; in
    # the spreads every value that is not text is named by read_spreads already
    named = tuple(p.path for p in r.problems)
    r.problems.extend(p for p in non_finite_problems(obj)
                      if not any(p.path == n or p.path.startswith((n + ".", n + "["))
                                 for n in named + ("spreads",)))
    if r.problems:
        raise RigError(r.problems)
    given = frozenset(k for k in _RIG_KEYS if k in obj)
    rig = Rig(tuple(links), drive, limits, title, g, rho, given, extra, spreads)
    check_ranges(rig, r.fail, r.warn)
    if r.problems:
        raise RigError(r.problems)
    _warn_operating_point(r, rig)
    return (rig, r.warnings) if with_warnings else rig


def _read_limits(r: _Reader, raw: Any, drive: Drive | None) -> Limits | None:
    obj = r.obj(raw, "limits")
    if obj is None:
        return None
    speed0 = drive.speed_rpm if drive else 1.0
    stroke0 = drive.stroke_m if drive else 0.0
    # Without limits, search a generous band around the operating point.
    default_speed = (speed0 / 4.0, speed0 * 4.0)
    default_stroke = (0.0, max(stroke0 * 4.0, 1e-3))
    speed = r.pair(obj, "speed_rpm", "limits", kind="speed", unit="rpm", default=default_speed)
    stroke = r.pair(obj, "stroke_m", "limits", kind="length", unit="m", default=default_stroke)
    caps = {}
    for key, kind, unit in (("max_force_N", "force", "N"), ("max_power_W", "power", "W"),
                            ("max_accel_m_s2", "acceleration", "m/s^2"),
                            ("max_lean_deg", "angle_deg", "deg")):
        caps[key] = (r.number(obj, key, "limits", kind=kind, unit=unit, exclusive_minimum=0.0)
                     if key in obj else None)
    extra = r.extras(obj, _LIMIT_KEYS, "limits")
    return Limits(speed, stroke, caps["max_force_N"], caps["max_power_W"],
                  caps["max_accel_m_s2"], frozenset(k for k in _LIMIT_KEYS if k in obj), extra,
                  max_lean_deg=caps["max_lean_deg"])


def _warn_operating_point(r: _Reader, rig: Rig) -> None:
    lo, hi = rig.limits.speed_rpm
    if not lo <= rig.drive.speed_rpm <= hi:
        r.warn("drive.speed_rpm", f"{rig.drive.speed_rpm:g} rpm is outside the speed limits "
                                  f"[{lo:g}, {hi:g}] rpm: its windows are not given")
    lo, hi = rig.limits.stroke_m
    if not lo <= rig.drive.stroke_m <= hi:
        r.warn("drive.stroke_m", f"{rig.drive.stroke_m:g} m is outside the stroke limits "
                                 f"[{lo:g}, {hi:g}] m: its windows are not given")
    if "limits" not in rig.given:
        r.warn("limits", "no limits given: windows are searched from a quarter to four times "
                         "the speed and up to four times the stroke")
    top = 2 * MAX_CRANK_RATIO * rig.drive.rod_length_m
    if rig.drive.waveform == "crank" and rig.limits.stroke_m[1] > top:
        r.warn("limits.stroke_m", "windows and charts stop at a stroke of "
                                  f"{top:g} m: a crank reaches less than twice its connecting "
                                  f"rod, and this method resolves up to {MAX_CRANK_RATIO:g} of it")
