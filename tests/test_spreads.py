"""The rig file's ``spreads``: read, validated with the path named, kept on round trip,
and absent by default (no change to any existing output)."""
import json

import pytest

import shakestill as ss
from shakestill.model.spreads import number_at, with_number

SPREADS = {"links[0].length_m": "+-2%", "links[0].joint_damping_N_m_s": "0.5x..2x",
           "drive.speed_rpm": "+-1%", "drive.stroke_m": "+-0.3 mm",
           "links[0].point_masses[0].at_m": "+-1 mm"}


def demo_with(spreads):
    data = ss.demo_rig_dict()
    data["spreads"] = spreads
    return data


def test_ranges_of_each_form():
    rig = ss.rig_from_dict(demo_with(SPREADS))
    got = {s.path: s.range(number_at(rig, s.path)) for s in rig.spreads}
    # expected values worked by hand from the demo rig (arithmetic, no source), 1e-12 rel
    want = {"links[0].length_m": (0.245, 0.255),
            "links[0].joint_damping_N_m_s": (1.5e-4, 6e-4),
            "drive.speed_rpm": (2673.0, 2727.0),
            "drive.stroke_m": (0.0237, 0.0243),
            "links[0].point_masses[0].at_m": (0.239, 0.241)}
    for path, (lo, hi) in want.items():
        assert got[path][0] == pytest.approx(lo, rel=1e-12)
        assert got[path][1] == pytest.approx(hi, rel=1e-12)


def test_round_trip_keeps_the_text_and_absent_changes_nothing():
    data = demo_with(SPREADS)
    assert ss.rig_to_dict(ss.rig_from_dict(data)) == data
    plain = ss.demo_rig_dict()
    rig = ss.rig_from_dict(plain)
    assert "spreads" not in ss.rig_to_dict(rig) and rig.spreads == ()
    # the check of a rig with spreads is the check of its nominal rig (exact equality)
    assert json.dumps(ss.check(ss.rig_from_dict(data))) == json.dumps(ss.check(rig))


@pytest.mark.parametrize("spreads, path, words", [
    ({"links[3].length_m": "+-2%"}, "spreads.links[3].length_m", "names no number"),
    ({"drive.waveform": "+-2%"}, "spreads.drive.waveform", "names no number"),
    ({"links[0]": "+-2%"}, "spreads.links[0]", "names no number"),
    ({"links[0].length_m": "+-2 kg"}, "spreads.links[0].length_m", "not allowed"),
    ({"links[0].length_m": "2x..3x"}, "spreads.links[0].length_m", "0 < low <= 1 <= high"),
    ({"links[0].length_m": "+-120%"}, "spreads.links[0].length_m", "below 100%"),
    ({"links[0].length_m": "+-0.3 m"}, "spreads.links[0].length_m", "below what"),
    ({"limits.speed_rpm": "+-1%"}, "spreads.limits.speed_rpm", "carry no spread"),
    ({"links[0].length_m": 5}, "spreads.links[0].length_m", "+-2%"),
    ([], "spreads", "expected an object"),
])
def test_bad_spreads_name_their_path(spreads, path, words):
    with pytest.raises(ss.RigError) as err:
        ss.rig_from_dict(demo_with(spreads))
    assert [p.path for p in err.value.problems] == [path]
    assert words in err.value.problems[0].message


def test_with_number_replaces_one_number_only():
    rig = ss.demo_rig()
    moved = with_number(rig, "links[0].point_masses[0].at_m", 0.2)
    assert number_at(moved, "links[0].point_masses[0].at_m") == 0.2
    assert moved.links[0].length_m == rig.links[0].length_m
    assert with_number(moved, "links[0].point_masses[0].at_m", 0.24) == rig
