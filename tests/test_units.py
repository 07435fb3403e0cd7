"""Units as people say them, metric and customary, against their legal definitions.

Source for every factor: NIST Special Publication 811 (2008), appendix B (the
international yard and pound of 1959: 1 in = 0.0254 m exactly, 1 lb =
0.45359237 kg exactly, 1 lbf = 4.4482216152605 N exactly, 1 hp (mechanical)
= 745.6999 W), and the definition of the revolution (2 pi rad). Tolerance:
1e-12 relative (the factors are exact; only float rounding remains).
"""

from __future__ import annotations

import math
import subprocess
import sys

import pytest

import shakestill as ss
from shakestill.model.units import UnitError, allowed_units, parse_quantity

REL = 1e-12

CASES = [
    ("1 in", "length", 0.0254), ("2 inch", "length", 0.0508), ('1.5"', "length", 0.0381),
    ("1 ft", "length", 0.3048), ("2 feet", "length", 0.6096), ("1'", "length", 0.3048),
    ("1 lb", "mass", 0.45359237), ("16 oz", "mass", 0.45359237), ("250 g", "mass", 0.25),
    ("1 lb in^2", "inertia", 0.45359237 * 0.0254 ** 2),
    ("1 lb ft^2", "inertia", 0.45359237 * 0.3048 ** 2),
    ("1 kg cm^2", "inertia", 1e-4),
    ("1 lbf", "force", 4.4482216152605), ("1 kgf", "force", 9.80665),
    ("1 lbf in", "torque", 4.4482216152605 * 0.0254),
    ("1 ft lbf", "torque", 4.4482216152605 * 0.3048),
    ("1 hp", "power", 745.69987158227022),
    ("1800 r/min", "speed", 1800.0), ("1800 rev/min", "speed", 1800.0),
    ("30 Hz", "speed", 1800.0), ("2 rev/s", "speed", 120.0),
    ("100 rad/s", "speed", 100.0 * 60.0 / (2.0 * math.pi)),
    ("10 deg", "angle", math.radians(10.0)), ("10°", "angle", math.radians(10.0)),
    ("1 ft/s^2", "acceleration", 0.3048), ("2 g", "acceleration", 2 * 9.80665),
    ("60 rpm", "angular_rate", 2.0 * math.pi), ("1 rev/s", "angular_rate", 2.0 * math.pi),
    ("1 in^2", "area", 0.0254 ** 2), ("1 h", "time", 3600.0),
    ("0.001 lbf in s", "damping", 0.001 * 4.4482216152605 * 0.0254),
]


@pytest.mark.parametrize("text, kind, si", CASES)
def test_customary_and_metric_units_give_their_si_definitions(text, kind, si):
    assert parse_quantity(text, kind) == pytest.approx(si, rel=REL)


def test_units_are_read_whatever_their_case_and_spacing():
    assert parse_quantity("25MM", "length") == pytest.approx(0.025, rel=REL)
    assert parse_quantity("1  LB  IN^2", "inertia") == pytest.approx(2.9263965e-4, rel=1e-7)


def test_messages_list_each_unit_once():
    # one spelling per unit: "in" stands for in, inch, inches and "
    assert allowed_units("length") == "m, cm, mm, um, in, ft"
    with pytest.raises(UnitError, match="use m, cm, mm, um, in, ft"):
        parse_quantity("3 furlongs", "length")


def test_a_rig_file_in_customary_units_checks_like_its_metric_twin():
    """The same rig typed in inches and pounds gives the metric rig's check to 1e-12."""
    metric = ss.demo_rig_dict()
    customary = ss.demo_rig_dict()
    link = customary["links"][0]
    link["length_m"] = f"{0.25 / 0.0254!r} in"
    link["rod_mass_kg"] = f"{0.04 / 0.45359237!r} lb"
    link["point_masses"][0]["mass_kg"] = f"{0.025 / (0.45359237 / 16)!r} oz"
    customary["drive"]["stroke_m"] = f"{0.024 / 0.3048!r} ft"
    customary["drive"]["speed_rpm"] = f"{2700 * 2 * math.pi / 60!r} rad/s"
    a = ss.check(ss.rig_from_dict(metric))
    b = ss.check(ss.rig_from_dict(customary))
    for eq in ("inverted", "hanging"):
        assert b[eq]["max_multiplier"] == pytest.approx(a[eq]["max_multiplier"], rel=1e-12)
        assert b[eq]["stroke_window_m"] == pytest.approx(a[eq]["stroke_window_m"], rel=1e-9)


def test_cli_takes_customary_units_for_its_options():
    out = subprocess.run([sys.executable, "-m", "shakestill", "check", "--json",
                          "--speed", "3000 r/min", "--stroke", '1"'],
                         capture_output=True, text=True, check=True).stdout
    import json
    result = json.loads(out)
    assert result["speed_rpm"] == pytest.approx(3000.0, rel=REL)
    assert result["stroke_m"] == pytest.approx(0.0254, rel=REL)


def test_every_unit_the_rig_sheet_hints_at_is_one_the_core_reads():
    """site/state/rig-fields.js tells the user which units each field takes; each must be
    read by the core (model/units.py) as the field's quantity (common practice, no source)."""
    import re
    from pathlib import Path
    kinds = {"g_m_s2": "acceleration", "length_m": "length", "rod_mass_kg": "mass",
             "extra_inertia_kg_m2": "inertia", "joint_damping_N_m_s": "damping",
             "joint_friction_N_m": "torque", "mass_kg": "mass", "at_m": "length",
             "stroke_m": "length", "samples_stroke_m": "length", "rod_length_m": "length",
             "speed_rpm": "speed"}
    text = (Path(__file__).resolve().parents[1] / "site" / "state" / "rig-fields.js").read_text()
    seen = 0
    for key, hint in re.findall(r'(\w+): \{[^}]*?hint:\s*"[^"]*?Units: ([^"]+?)\.["\s]', text, re.S):
        kind = kinds.get(key)
        if kind is None:
            continue
        for unit in re.split(r",\s*", re.sub(r"\s*\([^)]*\)", "", hint)):
            assert parse_quantity(f"1 {unit}", kind) > 0, (key, unit)
            seen += 1
    assert seen >= 30


@pytest.mark.parametrize("text, want", [("24 mm", 0.024), ("36 mm", 0.036), ("0.3 mm", 0.0003),
                                        ("22.5 mm", 0.0225), ("25 g", 0.025), ("2.5 cm", 0.025),
                                        ("-12 mm", -0.012)])
def test_decimal_prefixes_give_exactly_the_double_of_the_si_number(text, want):
    # Python's float() of the SI decimal text is the correctly rounded double (IEEE 754);
    # "36 mm" must be that very number (36 * 1e-3 is one bit off), so a rig file shown in
    # mm on the page reads back unchanged. Equality, no tolerance.
    kind = "mass" if text.endswith(" g") else "length"
    assert parse_quantity(text, kind) == want
