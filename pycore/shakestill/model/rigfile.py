"""The rig file (format "shakestill-rig", version 1): JSON text and files in and out.

Reading and validation are ``rigread`` (``rig_from_dict``); this module writes a rig back
as the file it was read from, and reads and writes text and files with bounds
(``safejson``).
"""

from __future__ import annotations

import json
from typing import Any

from .rig import AIR_DENSITY, FORMAT, STANDARD_GRAVITY, VERSION, Drive, Link, PointMass, Rig
from .rigread import rig_from_dict
from .safejson import decode_text, loads_json
from .spreads import spreads_to_dict

__all__ = ["rig_from_dict", "rig_to_dict", "loads_rig", "dumps_rig", "load_rig", "save_rig"]

# ----------------------------------------------------------------------------- writing


def _put(out: dict, key: str, value: Any, given: frozenset, default: Any) -> None:
    if key in given or value != default:
        out[key] = value


def _put_zeros(out: dict, item, keys: tuple[str, ...]) -> None:
    """Optional numbers that default to 0, written when given or non-zero."""
    for key in keys:
        _put(out, key, getattr(item, key), item.given, 0.0)


def _point_to_dict(p: PointMass) -> dict:
    out: dict[str, Any] = {"mass_kg": p.mass_kg, "at_m": p.at_m}
    _put_zeros(out, p, ("drag_coefficient", "frontal_area_m2"))
    out.update(dict(p.extra))
    return out


def _link_to_dict(link: Link) -> dict:
    out: dict[str, Any] = {"length_m": link.length_m}
    _put(out, "rod_mass_kg", link.rod_mass_kg, link.given, 0.0)
    if "point_masses" in link.given or link.point_masses:
        out["point_masses"] = [_point_to_dict(p) for p in link.point_masses]
    _put_zeros(out, link, ("extra_inertia_kg_m2", "joint_damping_N_m_s", "joint_friction_N_m"))
    out.update(dict(link.extra))
    return out


def _drive_to_dict(drive: Drive) -> dict:
    out: dict[str, Any] = {"waveform": drive.waveform}
    if drive.waveform == "samples":
        out["samples_m"] = list(drive.samples_m)
        if "stroke_m" in drive.given or drive.stroke_m != drive.samples_stroke_m:
            out["stroke_m"] = drive.stroke_m
    else:
        out["stroke_m"] = drive.stroke_m
    if drive.waveform == "crank":
        out["rod_length_m"] = drive.rod_length_m
    out["speed_rpm"] = drive.speed_rpm
    _put_zeros(out, drive, ("carriage_mass_kg", "axis_tilt_deg", "side_stroke_m",
                            "side_phase_deg"))
    out.update(dict(drive.extra))
    return out


def rig_to_dict(rig: Rig) -> dict:
    """The rig file's JSON object; a loaded file comes back as it was read (in SI)."""
    out: dict[str, Any] = {"format": FORMAT, "version": VERSION}
    _put(out, "title", rig.title, rig.given, "")
    _put(out, "g_m_s2", rig.g_m_s2, rig.given, STANDARD_GRAVITY)
    _put(out, "air_density_kg_m3", rig.air_density_kg_m3, rig.given, AIR_DENSITY)
    out["links"] = [_link_to_dict(link) for link in rig.links]
    out["drive"] = _drive_to_dict(rig.drive)
    if "limits" in rig.given:
        limits = {}
        _put(limits, "speed_rpm", list(rig.limits.speed_rpm), rig.limits.given, None)
        _put(limits, "stroke_m", list(rig.limits.stroke_m), rig.limits.given, None)
        for key in ("max_force_N", "max_power_W", "max_accel_m_s2", "max_lean_deg"):
            _put(limits, key, getattr(rig.limits, key), rig.limits.given, None)
        limits.update(dict(rig.limits.extra))
        out["limits"] = limits
    if "spreads" in rig.given or rig.spreads:
        out["spreads"] = spreads_to_dict(rig.spreads)
    out.update(dict(rig.extra))
    return out


def loads_rig(text: str, *, with_warnings: bool = False):
    """Parse rig-file text (JSON, bounded: ``safejson``); problems name their JSON path."""
    return rig_from_dict(loads_json(text), with_warnings=with_warnings)


def dumps_rig(rig: Rig) -> str:
    return json.dumps(rig_to_dict(rig), indent=2) + "\n"


def load_rig(path, *, with_warnings: bool = False):
    """Read a rig file from disk (UTF-8, with or without a byte-order mark)."""
    with open(path, "rb") as fh:
        return loads_rig(decode_text(fh.read(), "(file)"), with_warnings=with_warnings)


def save_rig(rig: Rig, path) -> None:
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(dumps_rig(rig))
