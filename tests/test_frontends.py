"""The command line, the bridge, share links and unit parsing, as a user meets them."""

import json
import math
import subprocess
import sys

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import shakestill as ss
from shakestill import bridge
from shakestill.model import share
from shakestill.model.units import UnitError, parse_quantity


def run_cli(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "shakestill", *args], capture_output=True,
                          text=True, input=stdin, timeout=300)


def test_check_json_is_the_engine_result(tmp_path):
    # The CLI's JSON equals ss.check of the same rig, to the last digit (same code path).
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(ss.demo_rig_dict()))
    out = run_cli("check", str(path), "--json")
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout) == json.loads(json.dumps(ss.check(ss.demo_rig())))


def test_check_overrides_take_units():
    # 1800 rpm and 25 mm typed with units must equal the SI override (common practice).
    out = run_cli("check", "--json", "--speed", "30 Hz", "--stroke", "25mm")
    data = json.loads(out.stdout)
    assert data["speed_rpm"] == pytest.approx(1800.0, rel=1e-15)
    assert data["stroke_m"] == pytest.approx(0.025, rel=1e-15)


@pytest.mark.parametrize("args, field", [
    (("check", "--speed", "-5rpm"), "--speed"),
    (("check", "--stroke", "-5mm"), "--stroke"),
    (("check", "--stroke", "25 furlongs"), "--stroke"),
    (("runup", "--rate", "0rpm/s"), "--rate"),
    (("runup", "--rate", "-.5rpm/s"), "--rate"),
])
def test_bad_options_name_the_field_and_exit_2(args, field):
    # the option, the value as typed and what is allowed (not argparse's "expected one
    # argument" for a value that starts with a minus sign)
    out = run_cli(*args)
    assert out.returncode == 2
    assert f"{field}: {args[-1]!r} is not allowed" in out.stderr, out.stderr
    assert "expected one argument" not in out.stderr and "Traceback" not in out.stderr


def test_a_negative_value_after_its_option_is_read_as_a_value(capsys):
    # `--angle -10deg` is the same request as `--angle=-10deg`: the same JSON, to the bit
    from shakestill.cli import main
    outs = []
    for angle in (["--angle", "-10deg"], ["--angle=-10deg"]):
        assert main(["simulate", "--json", "--duration", "0.05s", *angle]) == 0
        outs.append(json.loads(capsys.readouterr().out))
    assert outs[0] == outs[1]
    # the start angle, from the upward vertical, is -10 deg (the rig file's convention)
    assert outs[0]["strobe"]["t_s"][0] == 0.0
    assert outs[0]["strobe"]["angles_rad"][0][0] == pytest.approx(math.radians(-10), abs=1e-12)


def test_bad_rig_file_lists_every_problem(tmp_path):
    data = ss.demo_rig_dict()
    data["links"][0]["length_m"] = -0.3
    data["drive"]["rod_length_m"] = 0.001
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(data))
    out = run_cli("check", str(path))
    assert out.returncode == 2
    assert "links[0].length_m" in out.stderr and "drive.rod_length_m" in out.stderr
    assert "Traceback" not in out.stderr


def test_crank_stroke_override_beyond_the_rod_is_refused():
    # Slider-crank geometry (handbook): the crank radius must stay below the rod length.
    out = run_cli("check", "--stroke", "200mm")
    assert out.returncode == 2 and "drive.rod_length_m" in out.stderr


def test_bridge_check_matches_engine_and_never_raises():
    reply = json.loads(bridge.handle(json.dumps({"op": "check", "rig": ss.demo_rig_dict()})))
    assert reply["ok"] and reply["result"] == json.loads(json.dumps(ss.check(ss.demo_rig())))
    assert json.loads(bridge.handle("{not json"))["ok"] is False
    bad = ss.demo_rig_dict()
    bad["drive"]["stroke_m"] = "lots"
    reply = json.loads(bridge.handle(json.dumps({"op": "check", "rig": bad})))
    assert not reply["ok"] and reply["problems"][0]["path"] == "drive.stroke_m"


def test_share_round_trip_is_exact():
    data = ss.demo_rig_dict()
    fragment = share.encode(data, {"panel": "chart"})
    rig, view = share.decode("https://example.invalid/page#" + fragment)
    assert rig == ss.rig_to_dict(ss.rig_from_dict(data)) and view == {"panel": "chart"}


@settings(max_examples=300, deadline=None)
@given(st.integers(min_value=3, max_value=400), st.characters(
    whitelist_categories=("Lu", "Ll", "Nd"), whitelist_characters="-_"))
def test_a_damaged_link_is_refused_not_misread(position, char):
    # zlib's Adler-32 checksum (RFC 1950) catches a changed character; the decoder must
    # either refuse with a RigError at "(link)" or give back exactly the original rig.
    fragment = share.encode(ss.demo_rig_dict())
    position %= len(fragment)
    damaged = fragment[:position] + char + fragment[position + 1:]
    try:
        rig, _ = share.decode(damaged)
    except ss.RigError as exc:
        assert exc.problems[0].path == "(link)"
    else:
        assert rig == ss.rig_to_dict(ss.demo_rig())


@pytest.mark.parametrize("text, kind, si", [
    ("25 mm", "length", 0.025), ("2.5cm", "length", 0.025), ("40 Hz", "speed", 2400.0),
    ("1800rpm", "speed", 1800.0), ("20 g", "mass", 0.02), ("3 g", "acceleration", 3 * 9.80665),
    ("200 rpm/s", "rate", 200.0), (0.3, "length", 0.3),
])
def test_units(text, kind, si):
    # Unit definitions: SI brochure (BIPM, 9th ed.); g_n = 9.80665 m/s^2 (CGPM 1901).
    assert parse_quantity(text, kind) == pytest.approx(si, rel=1e-15)


def test_unknown_unit_says_what_is_allowed():
    with pytest.raises(UnitError, match="mm"):
        parse_quantity("3 parsecs", "length")
