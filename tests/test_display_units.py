"""Display units of the words and pictures (``render/shown.py``, the CLI's ``--units``, the
ops' ``units`` field) against the legal definitions.

Source for every factor: NIST Special Publication 811 (2008), appendix B: 1 in = 0.0254 m,
1 ft = 0.3048 m, 1 lb = 0.45359237 kg exactly; 1 lbf = 1 lb x standard gravity
(9.80665 m/s^2, CGPM 1901) = 4.4482216152605 N exactly; 1 hp (mechanical) = 745.69987 W.
Tolerance of the factors: 1e-12 relative (only float rounding remains). Printed numbers are
compared to half a unit in their last printed digit.
"""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys

import pytest

from shakestill.bridge import handle
from shakestill.model.demo import demo_rig_dict
from shakestill.render.plots import loads_svg
from shakestill.render.shown import SYSTEMS, length_text, shown, text

REL = 1e-12
IN, FT, LB, G0 = 0.0254, 0.3048, 0.45359237, 9.80665
LBF = LB * G0

# (kind, SI value, imperial unit, the value in that unit by the definitions)
IMPERIAL = [
    ("length", 0.0254, "in", 1.0), ("length", 0.3048, "in", 12.0),
    ("mass", 0.45359237, "lb", 1.0), ("mass", 1.0, "lb", 1 / LB),
    ("force", 4.4482216152605, "lbf", 1.0), ("force", 1.0, "lbf", 1 / LBF),
    ("power", 745.69987158227022, "hp", 1.0),
    ("acceleration", G0, "ft/s^2", G0 / FT), ("velocity", 0.3048, "ft/s", 1.0),
    ("damping", LBF * IN, "lbf in s", 1.0), ("torque", LBF * IN, "lbf in", 1.0),
    ("inertia", LB * IN ** 2, "lb in^2", 1.0),
]


@pytest.mark.parametrize("kind,si,unit,want", IMPERIAL)
def test_imperial_numbers_follow_the_exact_definitions(kind, si, unit, want):
    got, got_unit = shown(si, kind, "imperial")
    assert got_unit == unit
    assert got == pytest.approx(want, rel=REL)  # NIST SP 811 appendix B, 1e-12


def test_metric_is_mm_and_si():
    assert shown(0.024, "length", "metric") == (pytest.approx(24.0, rel=REL), "mm")
    assert shown(3.5, "force", "metric") == (3.5, "N")
    assert length_text(0.02, "metric") == "20.00 mm"  # 0.01 mm
    assert length_text(0.0254, "imperial") == "1.000 in"  # 0.001 in
    assert text(LBF, "force", "imperial") == "1 lbf"


def test_an_unknown_system_is_named():
    with pytest.raises(ValueError, match="'furlong' is not allowed: use metric or imperial"):
        shown(1.0, "length", "furlong")
    assert SYSTEMS == ("metric", "imperial")


def run_cli(*args):
    return subprocess.run([sys.executable, "-m", "shakestill", *args], capture_output=True,
                          text=True, timeout=300)


def number_before(text_: str, unit: str, after: str = "") -> float:
    tail = text_.split(after, 1)[1] if after else text_
    match = re.search(r"(-?[\d,]+\.?\d*(?:e-?\d+)?) " + re.escape(unit) + r"\b", tail)
    assert match, f"no number in {unit!r} in {tail[:300]!r}"
    return float(match.group(1).replace(",", ""))


def within_last_digit(got: float, want: float, decimals: int) -> None:
    assert abs(got - want) <= 0.5 * 10 ** -decimals + 1e-12  # printed to `decimals` places


def test_check_report_in_imperial_matches_the_si_json():
    result = json.loads(run_cli("check", "--json", "--units", "imperial").stdout)
    metric = json.loads(run_cli("check", "--json").stdout)
    assert result == metric  # --json stays SI whatever the units
    words = run_cli("check", "--units", "imperial").stdout
    within_last_digit(number_before(words, "in", "stroke"), result["stroke_m"] / IN, 3)
    within_last_digit(number_before(words, "ft/s^2"), result["peak_accel_m_s2"] / FT, 1)
    low = result["inverted"]["stroke_window_m"][0]
    within_last_digit(number_before(words, "in", "stroke window:"), low / IN, 3)
    assert " mm" not in words and "m/s^2" not in words.replace("ft/s^2", "")


def test_loads_words_and_plot_in_pound_force():
    done = run_cli("loads", "--json")
    result = json.loads(done.stdout)
    words = run_cli("loads", "--units", "imperial").stdout
    peak = result["drive_force_N"]["peak"]
    got = number_before(words, "lbf", "drive force: peak")
    assert got == pytest.approx(peak / LBF, rel=5e-4)  # 4 significant figures printed
    svg, axes = loads_svg(result, "imperial")
    assert axes["y"]["unit"] == "lbf" and "force (lbf" in svg
    y = axes["y"]
    assert max(-y["min"], y["max"]) >= peak / LBF * (1 - 1e-12)  # the axis spans the peak, lbf
    svg_m, axes_m = loads_svg(result)
    assert axes_m["y"]["max"] == pytest.approx(axes["y"]["max"] * LBF, rel=1e-12)


def test_every_text_command_takes_units_and_refuses_others():
    for name in ("check", "chart", "runup", "loads", "plan", "lean", "fit"):
        assert "--units" in run_cli(name, "--help").stdout, name
    bad = run_cli("check", "--units", "furlong")
    assert bad.returncode == 2 and "invalid choice: 'furlong'" in bad.stderr


def test_ops_take_units_for_their_words_and_name_a_bad_one():
    rig = demo_rig_dict()
    reply = json.loads(handle(json.dumps({"op": "check", "rig": rig, "units": "imperial"})))
    assert reply["ok"] and " in " in reply["report_text"] and " mm" not in reply["report_text"]
    metric = json.loads(handle(json.dumps({"op": "check", "rig": rig})))
    assert metric["result"] == reply["result"]  # the result stays SI
    loads = json.loads(handle(json.dumps({"op": "loads", "rig": rig, "units": "imperial"})))
    assert loads["axes"]["y"]["unit"] == "lbf" and "lbf" in loads["report_text"]
    for op in ("check", "loads", "runup"):
        bad = json.loads(handle(json.dumps({"op": op, "rig": rig, "units": "cubits",
                                            "rate_rpm_s": 20})))
        assert not bad["ok"] and bad["problems"][0]["path"] == "units", op


def test_runup_and_lean_words_and_picture_give_the_stroke_in_inches():
    runup = json.loads(run_cli("runup", "--rate", "20", "--json").stdout)
    words = run_cli("runup", "--rate", "20", "--units", "imperial").stdout
    within_last_digit(number_before(words, "in", "stroke"), runup["stroke_m"] / IN, 3)
    small = ("--tilts", "3", "--speeds", "3", "--tilt", "1")
    lean = json.loads(run_cli("lean", *small, "--json").stdout)
    done = run_cli("lean", *small, "--units", "imperial")
    within_last_digit(number_before(done.stdout, "in", "stroke"), lean["stroke_m"] / IN, 3)
    assert " mm" not in done.stdout


def test_loads_limit_flags_in_the_units_chosen(tmp_path):
    rig = demo_rig_dict()
    rig["limits"]["max_force_N"] = 1.0  # far below the drive force: exceeded
    rig["limits"]["max_accel_m_s2"] = 1e4  # far above the pivot's: within
    path = tmp_path / "limits.json"
    path.write_text(json.dumps(rig))
    flags = {f["limit"]: f for f in json.loads(run_cli("loads", str(path), "--json").stdout)["flags"]}
    words = run_cli("loads", str(path), "--units", "imperial").stdout
    force = re.search(r"LIMIT: peak drive force ([\d.e+-]+) lbf EXCEEDS the limit of ([\d.e+-]+) lbf", words)
    accel = re.search(r"limit: peak pivot acceleration ([\d.e+-]+) ft/s\^2 is within the limit of "
                      r"([\d.e+-]+) ft/s\^2", words)
    assert force and accel, words
    # NIST SP 811 appendix B (1 lbf = 4.4482216152605 N, 1 ft = 0.3048 m); 4 figures printed
    assert float(force.group(1)) == pytest.approx(flags["max_force_N"]["value"] / LBF, rel=5e-4)
    assert float(force.group(2)) == pytest.approx(1.0 / LBF, rel=5e-4)
    assert float(accel.group(1)) == pytest.approx(flags["max_accel_m_s2"]["value"] / FT, rel=5e-4)
    assert float(accel.group(2)) == pytest.approx(1e4 / FT, rel=5e-4)
    assert " N " not in words.replace("lbf", "") and "m/s^2" not in words.replace("ft/s^2", "")
    metric = run_cli("loads", str(path)).stdout  # metric words are the flags' own SI messages
    assert all(f["message"] in metric for f in flags.values())


def test_fit_words_in_the_units_chosen():
    from shakestill.render.motion_report import fit_text

    # A fit's result as fit_dict writes it (SI), numbers picked so the imperial ones are round
    # by the definitions of NIST SP 811 appendix B: 0.5 lbf in s, 2 lb in^2.
    params = [{"path": "links[0].joint_damping_N_m_s", "start": 0.25 * LBF * IN,
               "value": 0.5 * LBF * IN, "std_error": 0.01 * LBF * IN},
              {"path": "links[0].extra_inertia_kg_m2", "start": 1.0 * LB * IN ** 2,
               "value": 2.0 * LB * IN ** 2, "std_error": float("inf")}]
    result = {"samples": 100, "iterations": 4, "simulations": 12, "converged": True,
              "message": "", "rms_start_rad": 0.1, "rms_rad": 0.01, "parameters": params,
              "initial_angles_rad": [0.2], "initial_rates_rad_s": [0.0]}
    words = fit_text(result, "hanging", "imperial")
    damping = re.search(r"joint_damping_N_m_s: ([\d.e-]+) lbf in s -> ([\d.e-]+) \+- ([\d.e-]+) lbf in s",
                        words)
    inertia = re.search(r"extra_inertia_kg_m2: ([\d.e-]+) lb in\^2 -> ([\d.e-]+) lb in\^2 \(not determined",
                        words)
    assert damping and inertia, words
    assert [float(g) for g in damping.groups()] == pytest.approx([0.25, 0.5, 0.01], rel=1e-6)
    assert [float(g) for g in inertia.groups()] == pytest.approx([1.0, 2.0], rel=1e-6)
    metric = fit_text(result, "hanging")
    got = re.search(r"joint_damping_N_m_s: ([\d.e-]+) N m s -> ([\d.e-]+) \+-", metric)
    # printed to the standard error's second figure (0.0011 N m s): half a unit of 1e-4
    assert float(got.group(2)) == pytest.approx(0.5 * LBF * IN, abs=0.5e-4 + 1e-12)
    bad = json.loads(handle(json.dumps({"op": "fit", "rig": demo_rig_dict(), "units": "cubits",
                                        "log": "t_s,angle_deg\n0,1\n"})))
    assert not bad["ok"] and bad["problems"][0]["path"] == "units"


def test_fit_start_that_rounds_to_zero_is_written_without_a_sign():
    # A start angle or rate that rounds to zero at the printed digits is "0.000", never
    # "-0.000" (common practice, no source): a fitted rate of -1e-9 rad/s from rest.
    from shakestill.render.motion_report import fit_text
    result = {"samples": 100, "iterations": 4, "simulations": 12, "converged": True,
              "message": "", "rms_start_rad": 0.1, "rms_rad": 0.01, "parameters": [],
              "initial_angles_rad": [math.pi - 1e-9], "initial_rates_rad_s": [-1e-9]}
    words = fit_text(result, "hanging")
    assert "angles 0.000 deg; rates 0.0000 rad/s" in words, words
    result["initial_rates_rad_s"] = [-0.25]  # a real sign stays
    assert "rates -0.2500 rad/s" in fit_text(result, "hanging")
