"""Quantities with units, as people type them: "25 mm", "1800rpm", "40 Hz".

This is the one place that knows unit names. Everything past it is SI.
"""

from __future__ import annotations

import math
import re
from decimal import Decimal

# Exact definitions of the customary units (international yard and pound, 1959; NIST SP 811,
# appendix B): 1 in = 0.0254 m, 1 ft = 0.3048 m, 1 lb = 0.45359237 kg, 1 lbf = 1 lb x g0.
INCH = 0.0254
FOOT = 0.3048
POUND = 0.45359237
OUNCE = POUND / 16.0
G0 = 9.80665  # standard gravity, m/s^2 (CGPM 1901): one "g" and the pound-force's g
POUND_FORCE = POUND * G0
RPM_PER_RAD_S = 60.0 / (2.0 * math.pi)

# Each kind maps unit spellings (lower case, single spaces) to the factor that turns them
# into SI (rpm for speeds). The first spelling of each unit is the one error messages list.
UNITS: dict[str, dict[str, float]] = {
    "length": {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "um": 1e-6, "in": INCH, "inch": INCH,
               "inches": INCH, '"': INCH, "ft": FOOT, "foot": FOOT, "feet": FOOT, "'": FOOT},
    "mass": {"kg": 1.0, "g": 1e-3, "lb": POUND, "lbs": POUND, "oz": OUNCE},
    "speed": {"rpm": 1.0, "r/min": 1.0, "rev/min": 1.0, "1/min": 1.0, "hz": 60.0,
              "rev/s": 60.0, "rps": 60.0, "rad/s": RPM_PER_RAD_S},
    "inertia": {"kg m2": 1.0, "kg*m2": 1.0, "kg m^2": 1.0, "kg*m^2": 1.0,
                "kg cm2": 1e-4, "kg cm^2": 1e-4, "g cm2": 1e-7, "g*cm2": 1e-7, "g cm^2": 1e-7,
                "lb in2": POUND * INCH ** 2, "lb in^2": POUND * INCH ** 2,
                "lb*in^2": POUND * INCH ** 2, "lb ft2": POUND * FOOT ** 2,
                "lb ft^2": POUND * FOOT ** 2, "oz in2": OUNCE * INCH ** 2,
                "oz in^2": OUNCE * INCH ** 2},
    "damping": {"n m s": 1.0, "n*m*s": 1.0, "nms": 1.0, "n m s/rad": 1.0,
                "lbf in s": POUND_FORCE * INCH, "lbf*in*s": POUND_FORCE * INCH},
    "torque": {"n m": 1.0, "n*m": 1.0, "nm": 1.0, "mn m": 1e-3, "mnm": 1e-3,
               "lbf in": POUND_FORCE * INCH, "in lbf": POUND_FORCE * INCH,
               "lbf ft": POUND_FORCE * FOOT, "ft lbf": POUND_FORCE * FOOT,
               "ozf in": POUND_FORCE / 16.0 * INCH, "oz in": POUND_FORCE / 16.0 * INCH},
    "acceleration": {"m/s2": 1.0, "m/s^2": 1.0, "g": G0, "ft/s2": FOOT, "ft/s^2": FOOT,
                     "in/s2": INCH, "in/s^2": INCH},
    "rate": {"rpm/s": 1.0, "r/min/s": 1.0, "hz/s": 60.0, "rpm/min": 1.0 / 60.0},
    "force": {"n": 1.0, "kn": 1e3, "lbf": POUND_FORCE, "kgf": G0},
    "power": {"w": 1.0, "kw": 1e3, "hp": 745.69987158227022},  # mechanical horsepower
    "velocity": {"m/s": 1.0, "mm/s": 1e-3, "ft/s": FOOT, "in/s": INCH},
    "area": {"m2": 1.0, "m^2": 1.0, "cm2": 1e-4, "cm^2": 1e-4, "mm2": 1e-6, "mm^2": 1e-6,
             "in2": INCH ** 2, "in^2": INCH ** 2, "sq in": INCH ** 2},
    "time": {"s": 1.0, "ms": 1e-3, "min": 60.0, "h": 3600.0},
    "angle": {"rad": 1.0, "deg": math.pi / 180.0, "degrees": math.pi / 180.0,
              "°": math.pi / 180.0},
    "angle_deg": {"deg": 1.0, "degrees": 1.0, "°": 1.0,  # fields named *_deg: a bare number
                  "rad": 180.0 / math.pi},  # is in degrees
    "angular_rate": {"rad/s": 1.0, "deg/s": math.pi / 180.0, "rpm": 2 * math.pi / 60.0,
                     "r/min": 2 * math.pi / 60.0, "rev/s": 2 * math.pi, "hz": 2 * math.pi},
    "plain": {"": 1.0},
}

# How the lower-case spellings above are written for people (SI symbols keep their case).
SHOWN = {"hz": "Hz", "n m s": "N m s", "n m": "N m", "mn m": "mN m", "n": "N", "kn": "kN",
         "w": "W", "kw": "kW", "hz/s": "Hz/s"}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


class UnitError(ValueError):
    """A quantity could not be read; the message says what is allowed."""


def allowed_units(kind: str) -> str:
    """The units accepted for ``kind``, one spelling each as people write it, for messages
    and the page's hints (tests/browser/test_unit_hints.py holds the hints to it)."""
    seen, names = set(), []
    for spelling, factor in UNITS[kind].items():
        if spelling and factor not in seen:
            seen.add(factor)
            names.append(SHOWN.get(spelling, spelling))
    return ", ".join(names)


def parse_quantity(value: object, kind: str) -> float:
    """Turn a number or a string with a unit into SI.

    Parameters
    ----------
    value : float, int or str
        ``0.025``, ``"0.025"``, ``"25 mm"`` or ``"25mm"``. A bare number is SI
        (metres, kilograms, rpm for speeds).
    kind : str
        A key of ``UNITS``.

    Raises
    ------
    UnitError
        When the text is not a number followed by an allowed unit.
    """
    if kind not in UNITS:
        raise ValueError(f"kind: unknown quantity kind {kind!r}")
    if isinstance(value, bool):
        raise UnitError("expected a number, got a true/false value")
    if isinstance(value, int):
        try:
            return float(value)
        except OverflowError:
            raise UnitError(f"a {len(str(abs(value)))}-digit number is far too large") from None
    if isinstance(value, float):
        return value
    if not isinstance(value, str):
        raise UnitError(f"expected a number, got {type(value).__name__}")
    match = _NUMBER.match(value)
    if not match:
        raise UnitError(f"{value!r} is not a number with a unit"
                        + (f" (units: {allowed_units(kind)})" if kind != "plain" else ""))
    number, unit = float(match.group(1)), match.group(2).lower().replace("²", "2")
    unit = re.sub(r"\s+", " ", unit)
    table = UNITS[kind]
    if unit == "":
        return number
    if unit not in table:
        raise UnitError(f"unit {match.group(2)!r} is not allowed here; use {allowed_units(kind)}")
    factor = table[unit]
    power = round(math.log10(factor)) if factor > 0 else 0
    if factor == 10.0 ** power and number != 0 and math.isfinite(number):
        # a decimal prefix moves the decimal point: "24 mm" is exactly the double of 0.024,
        # where 24 * 1e-3 would be one bit off (two roundings)
        return float(Decimal(match.group(1)).scaleb(power))
    return number * factor
