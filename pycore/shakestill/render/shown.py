"""Numbers in the units a reader chose for display: metric (mm, kg, N) or imperial (in, lb,
lbf). Only the words and pictures follow the choice; JSON stays SI.

The factors are the parser's own (``model/units.py``), so what the page or the CLI writes in
inches reads back through the same definitions (1 in = 0.0254 m, 1 lb = 0.45359237 kg,
1 lbf = 1 lb x 9.80665 m/s^2; NIST SP 811, appendix B).
"""

from __future__ import annotations

from ..model.units import UNITS

SYSTEMS = ("metric", "imperial")

# kind -> {system: unit spelling}; each spelling is a key of UNITS[kind] (its factor to SI).
_SHOWN = {
    "length": {"metric": "mm", "imperial": "in"},
    "mass": {"metric": "kg", "imperial": "lb"},
    "force": {"metric": "N", "imperial": "lbf"},
    "power": {"metric": "W", "imperial": "hp"},
    "acceleration": {"metric": "m/s^2", "imperial": "ft/s^2"},
    "velocity": {"metric": "m/s", "imperial": "ft/s"},
    "damping": {"metric": "N m s", "imperial": "lbf in s"},
    "torque": {"metric": "N m", "imperial": "lbf in"},
    "inertia": {"metric": "kg m^2", "imperial": "lb in^2"},
}


def check_units(units: str) -> str:
    """``units`` itself, or ValueError naming what is allowed."""
    if units not in SYSTEMS:
        raise ValueError(f"units: {units!r} is not allowed: use metric or imperial")
    return units


def unit_of(kind: str, units: str) -> str:
    """The unit a ``kind`` of quantity is written in (``"in"`` for a length in imperial)."""
    return _SHOWN[kind][check_units(units)]


def shown(value_si: float, kind: str, units: str) -> tuple[float, str]:
    """(number, unit) of an SI value for display: ``shown(0.0254, "length", "imperial")`` is
    ``(1.0, "in")``."""
    unit = unit_of(kind, units)
    return value_si / UNITS[kind][unit.lower()], unit


def text(value_si: float, kind: str, units: str, spec: str = ".4g") -> str:
    """``"25.00 mm"`` or ``"0.9843 in"``: the number formatted by ``spec``, then its unit."""
    number, unit = shown(value_si, kind, units)
    return f"{number:{spec}} {unit}"


# Decimals of a stroke or length in the reports: 0.01 mm, or 0.001 in (0.0254 mm).
_LENGTH_SPEC = {"metric": ".2f", "imperial": ".3f"}


def length_text(value_m: float, units: str, metric_spec: str = ".2f") -> str:
    """A stroke or length for the reports: ``"20.00 mm"`` or ``"0.787 in"``; a finer
    ``metric_spec`` (".3f") gives the imperial text one decimal more as well."""
    spec = metric_spec if units == "metric" else \
        f".{int(metric_spec[1:-1]) + 1}f" if metric_spec.endswith("f") else metric_spec
    return text(value_m, "length", units, spec)
