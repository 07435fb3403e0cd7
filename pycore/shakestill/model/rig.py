"""The rig as frozen dataclasses (SI inside), its problems, and the rig file's constants.

Reading and writing the file (format "shakestill-rig", version 1) is ``rigfile``.
"""

from __future__ import annotations

import math

from dataclasses import dataclass

FORMAT = "shakestill-rig"
VERSION = 1
STANDARD_GRAVITY = 9.80665  # m/s^2, the conventional standard value (CGPM 1901)
AIR_DENSITY = 1.204  # kg/m^3, dry air at 20 C and 101.325 kPa (handbook value)
MAX_LINKS = 3
MIN_SAMPLES = 8  # fewer cannot describe a waveform's first harmonics usefully
WAVEFORMS = ("sine", "crank", "samples")
# Crank radius / rod length the methods resolve: the pivot's acceleration peaks as
# 1 / sqrt(1 - (r/l)^2), needing 112 harmonics at 0.95 (a 3 s check) and 2,000 near 1.
MAX_CRANK_RATIO = 0.95

# The magnitudes the methods are built for, by kind of quantity (in the file's units):
# (smallest non-zero, largest). Past them a value is refused by name as outside what the
# methods resolve: 1e300 overflows the drive's terms, a denormal divides by zero, and a
# link of a micron or a drive at 1e9 rpm would make the scans work without end.
REACH = {
    "length": (1e-12, 100.0),  # m (a link: at least MIN_LINK_M)
    "mass": (1e-12, 1e4),  # kg
    "inertia": (1e-18, 1e4),  # kg m^2
    "damping": (1e-15, 1e4),  # N m s
    "torque": (1e-12, 1e5),  # N m
    "speed": (1e-2, 1e6),  # rpm
    "area": (1e-12, 100.0),  # m^2
    "angle_deg": (1e-12, 360.0),  # deg: a drive's tilt and phase, a lean limit (one turn)
}
UNITS_OF_REACH = {"length": "m", "mass": "kg", "inertia": "kg m^2", "damping": "N m s",
                  "torque": "N m", "speed": "rpm", "area": "m^2", "acceleration": "m/s^2",
                  "angle_deg": "deg"}


def outside_reach(value: float, kind: str, *, reach: tuple | None = None,
                  zero_allowed: bool = False) -> str | None:
    """What is allowed, if ``value`` lies past the magnitudes the methods are built for
    (``reach``: (smallest non-zero or None, largest); by default REACH[kind]), else None."""
    least, most = reach or REACH.get(kind, (None, math.inf))
    if abs(value) <= most and (value == 0 or least is None or abs(value) >= least):
        return None
    unit = UNITS_OF_REACH.get(kind, "")
    span = f"a size up to {most:g}" if least is None else f"a size from {least:g} to {most:g}"
    zero = " (or 0)" if zero_allowed and least is not None else ""
    return f"outside what this method can resolve: use {span} {unit}".rstrip() + zero


MAX_TILT_DEG = 90.0  # a drive axis tilted past horizontal is the same line turned over
MIN_LINK_M = 1e-4  # a link or a connecting rod shorter than 0.1 mm is no pendulum or crank
GRAVITY_REACH = (1e-3, 1e3)  # m/s^2



@dataclass(frozen=True)
class Problem:
    """One thing wrong (or worth a warning) in a rig, at a JSON path."""

    path: str
    message: str

    def __str__(self) -> str:
        return f"{self.path}: {self.message}"


class RigError(ValueError):
    """The rig could not be read; ``problems`` lists every reason."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("; ".join(str(p) for p in self.problems))


class OutOfReach(RigError):
    """The rig is outside what the methods can resolve; each problem names the field and
    says why ("outside what this method can resolve: ...")."""


@dataclass(frozen=True)
class PointMass:
    mass_kg: float
    at_m: float  # from the link's own joint
    drag_coefficient: float = 0.0  # quadratic air drag C_d (0: off)
    frontal_area_m2: float = 0.0
    given: frozenset = frozenset()
    extra: tuple = ()


@dataclass(frozen=True)
class Link:
    length_m: float
    rod_mass_kg: float = 0.0
    point_masses: tuple[PointMass, ...] = ()
    extra_inertia_kg_m2: float = 0.0  # about the link's own centre of mass
    joint_damping_N_m_s: float = 0.0  # on the relative angular rate at the joint
    joint_friction_N_m: float = 0.0  # Coulomb torque at the joint
    given: frozenset = frozenset()
    extra: tuple = ()


@dataclass(frozen=True)
class Drive:
    waveform: str
    speed_rpm: float
    stroke_m: float  # operating stroke; for samples, the stroke they are scaled to
    rod_length_m: float = 0.0  # crank only
    samples_m: tuple[float, ...] = ()  # samples only: one cycle at equal phases
    samples_stroke_m: float = 0.0  # samples only: the stroke the samples have as given
    carriage_mass_kg: float = 0.0  # moving mass of the carriage, for drive loads
    given: frozenset = frozenset()
    extra: tuple = ()
    # The pivot's path off vertical, in the swing plane (a tilt out of that plane does not
    # enter a planar model): the pivot moves by s (sin a, cos a), a = axis_tilt_deg, plus
    # x = (side_stroke_m / 2) cos(phase + side_phase_deg) sideways (horizontal).
    axis_tilt_deg: float = 0.0  # towards positive link angles, from vertical
    side_stroke_m: float = 0.0  # peak-to-peak sideways sine motion at the drive frequency
    side_phase_deg: float = 0.0  # its phase lead over the drive phase

    @property
    def frequency_hz(self) -> float:
        return self.speed_rpm / 60.0

    @property
    def off_vertical(self) -> bool:
        """True when the pivot's path has any sideways part."""
        return self.axis_tilt_deg != 0.0 or self.side_stroke_m != 0.0


@dataclass(frozen=True)
class Limits:
    speed_rpm: tuple[float, float]
    stroke_m: tuple[float, float]
    max_force_N: float | None = None  # on the drive (pivot reaction plus carriage)
    max_power_W: float | None = None
    max_accel_m_s2: float | None = None  # of the pivot
    given: frozenset = frozenset()
    extra: tuple = ()
    max_lean_deg: float | None = None  # the held orbit's mean lean a tilt may cause (None: 5)


@dataclass(frozen=True)
class Rig:
    links: tuple[Link, ...]
    drive: Drive
    limits: Limits
    title: str = ""
    g_m_s2: float = STANDARD_GRAVITY
    air_density_kg_m3: float = AIR_DENSITY
    given: frozenset = frozenset()
    extra: tuple = ()
    spreads: tuple = ()  # model.spreads.Spread items: the planner's uncertainty (none: exact)

    @property
    def n_links(self) -> int:
        return len(self.links)


def with_operating_point(rig: Rig, *, speed_rpm: float | None = None,
                         stroke_m: float | None = None) -> Rig:
    """The same rig at another speed and/or stroke."""
    changes = {}
    if speed_rpm is not None:
        changes["speed_rpm"] = float(speed_rpm)
    if stroke_m is not None:
        changes["stroke_m"] = float(stroke_m)
    return swapped(rig, drive=swapped(rig.drive, **changes)) if changes else rig


def swapped(obj, **changes):
    """``dataclasses.replace`` for the hot path of scans (a chart asks for thousands of
    operating points): the same frozen object with some fields swapped, without re-running
    ``__init__`` (a quarter of the time it takes). Only for fields whose new values need
    no checking, as the operating point's floats here."""
    new = object.__new__(type(obj))
    new.__dict__.update(obj.__dict__, **changes)
    return new


def max_stroke_m(rig: Rig) -> float:
    """The largest stroke the analyses take: the limit, and for a crank at most
    MAX_CRANK_RATIO of the radius the rod allows (r < rod length)."""
    hi = rig.limits.stroke_m[1]
    if rig.drive.waveform == "crank":
        hi = min(hi, 2.0 * rig.drive.rod_length_m * MAX_CRANK_RATIO)
    return hi
