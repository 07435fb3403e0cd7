"""Quantities with units, as people type them: "25 mm", "1800rpm", "40 Hz".

This is the one place that knows unit names. Everything past it is SI.
"""

from __future__ import annotations

import math
import re

# Each kind maps unit spellings to the factor that turns them into SI.
UNITS: dict[str, dict[str, float]] = {
    "length": {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "um": 1e-6, "in": 0.0254},
    "mass": {"kg": 1.0, "g": 1e-3},
    "speed": {"rpm": 1.0, "hz": 60.0, "rev/min": 1.0, "1/min": 1.0},
    "inertia": {"kg m2": 1.0, "kg*m2": 1.0, "kg m^2": 1.0, "kg*m^2": 1.0,
                "g cm2": 1e-7, "g*cm2": 1e-7, "g cm^2": 1e-7},
    "damping": {"n m s": 1.0, "n*m*s": 1.0, "nms": 1.0, "n m s/rad": 1.0},
    "torque": {"n m": 1.0, "n*m": 1.0, "nm": 1.0, "mn m": 1e-3, "mnm": 1e-3},
    "acceleration": {"m/s2": 1.0, "m/s^2": 1.0, "g": 9.80665},
    "rate": {"rpm/s": 1.0, "hz/s": 60.0},
    "force": {"n": 1.0, "kn": 1e3},
    "power": {"w": 1.0, "kw": 1e3},
    "velocity": {"m/s": 1.0},
    "area": {"m2": 1.0, "m^2": 1.0, "cm2": 1e-4, "cm^2": 1e-4, "mm2": 1e-6, "mm^2": 1e-6},
    "time": {"s": 1.0, "ms": 1e-3, "min": 60.0},
    "angle": {"rad": 1.0, "deg": math.pi / 180.0},
    "angular_rate": {"rad/s": 1.0, "deg/s": math.pi / 180.0, "rpm": 2 * math.pi / 60.0},
    "plain": {"": 1.0},
}

_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


class UnitError(ValueError):
    """A quantity could not be read; the message says what is allowed."""


def allowed_units(kind: str) -> str:
    """The unit spellings accepted for ``kind``, for error messages."""
    return ", ".join(u for u in UNITS[kind] if u)


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
    if isinstance(value, (int, float)):
        return float(value)
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
    return number * table[unit]
