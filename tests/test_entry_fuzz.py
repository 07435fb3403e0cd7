"""A standing fuzz harness over the entry points (rig files through the CLI, share links,
bridge requests, CSV logs): every damaged input is answered or refused cleanly (exit code
0 or 2, or a reply with problems naming a path), never a traceback, never more than a few
seconds. Fixed seed and a modest count so CI stays fast; bench/fuzz_long.py runs the long
version and prints its counts. Common practice, no source."""

from __future__ import annotations

import json
import random
import time

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import fuzzcases as fc
import shakestill as ss
from shakestill import bridge, cli
from shakestill.fit.logfile import read_angle_log
from shakestill.model import share

SEED = 20261204
CASE_SECONDS = 60.0  # a hang, not a speed target: bench/fuzz_long.py counts cases over 5 s


@pytest.mark.parametrize("source", [fc.rig_text, fc.two_link_text], ids=["one link", "two links"])
def test_damaged_rig_files_are_checked_or_refused_cleanly(tmp_path, capsys, source):
    rnd = random.Random(SEED)
    path = tmp_path / "rig.json"
    codes = []
    for _ in range(25):
        path.write_bytes(fc.damage(source(), rnd))
        start = time.perf_counter()
        code = cli.main(["check", str(path), "--json"])
        assert time.perf_counter() - start < CASE_SECONDS
        err = capsys.readouterr().err
        assert code in (0, 2), err
        if code == 2:
            assert "cannot go on" in err and ": " in err.splitlines()[1]
        codes.append(code)
    assert 2 in codes  # the harness does damage the files


def test_damaged_share_links_are_decoded_or_refused_cleanly():
    rnd = random.Random(SEED)
    refused = 0
    for _ in range(200):
        link = fc.damaged_link(rnd)
        try:
            rig, view = share.decode(link)
        except ss.RigError as exc:
            refused += 1
            assert all(p.path and p.message for p in exc.problems)
        else:
            assert isinstance(rig, dict) and isinstance(view, dict)
    assert refused > 0


def test_damaged_bridge_requests_get_a_reply_never_an_exception():
    rnd = random.Random(SEED)
    for _ in range(40):
        text = fc.damage(json.dumps({"op": "validate", "rig": ss.demo_rig_dict()}).encode(), rnd)
        reply = json.loads(bridge.handle(text.decode("utf-8", "replace")))
        assert reply["ok"] in (True, False)
        if not reply["ok"]:
            assert reply.get("problems") or reply.get("error")
            assert "trace" not in reply  # an internal fault would carry its trace


def test_damaged_logs_are_read_or_refused_with_row_and_column():
    rnd = random.Random(SEED)
    for _ in range(200):
        text = fc.damage(fc.log_text(), rnd).decode("utf-8", "replace")
        try:
            read_angle_log(text, 1)
        except ss.RigError as exc:
            assert all(p.path.startswith("log") for p in exc.problems), exc.problems


SOURCES = {"one link": json.loads(fc.rig_text()), "two links": json.loads(fc.two_link_text())}


@st.composite
def renumbered_rigs(draw):
    """A rig file of the right shape whose numbers are scaled by 1e-9 .. 1e9, or replaced by
    an odd value (0, -0, NaN, infinities, denormals, 1e300), or whose waveform is swapped."""
    data = SOURCES[draw(st.sampled_from(sorted(SOURCES)))]
    how = st.one_of(st.tuples(st.just("scale"), st.sampled_from(fc.SCALES)),
                    st.tuples(st.just("scale"), st.floats(-1e3, 1e3)),
                    st.tuples(st.just("odd"), st.sampled_from(fc.ODD)))
    changes = draw(st.lists(st.tuples(st.sampled_from(fc.number_paths(data)), how),
                            min_size=1, max_size=4))
    if draw(st.booleans()):
        changes.append(((), ("waveform", draw(st.sampled_from(("sine", "crank"))))))
    return fc.rig_bytes(fc.renumbered(data, changes))


@settings(max_examples=30, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(renumbered_rigs())
def test_rigs_with_any_numbers_are_checked_or_refused_cleanly(tmp_path, capsys, text):
    # The analyses meet the numbers (most of these files load): exit 0 with a verdict, or 2
    # with a message naming a field; never a traceback, never a hang.
    path = tmp_path / "rig.json"
    path.write_bytes(text)
    start = time.perf_counter()
    code = cli.main(["check", str(path), "--json"])
    assert time.perf_counter() - start < CASE_SECONDS
    out, err = capsys.readouterr()
    assert code in (0, 2), err
    if code == 0:
        assert json.loads(out)["inverted"]["stable"] in (True, False)
    else:
        assert "cannot go on" in err and ": " in err.splitlines()[1]


@st.composite
def spread_sets(draw):
    """A rig file with 1..4 spreads: paths of its numbers (or of other things, or mangled),
    texts from the forms' pieces (+-, %, a unit, a factor range) with odd numbers in them."""
    data = json.loads(fc.rig_text())
    number = st.sampled_from(["links[0].length_m", "links[0].joint_damping_N_m_s",
                              "links[0].point_masses[0].at_m", "links[0].point_masses[0].mass_kg",
                              "drive.speed_rpm", "drive.stroke_m", "drive.rod_length_m"])
    path = st.one_of(number, number.map(lambda p: p.replace("0", draw(st.sampled_from(
        ["1", "00", "9" * 30, "-1", " 0"])))), st.text(max_size=20),
        st.sampled_from(["drive.waveform", "limits.speed_rpm", "links", "title", "g_m_s2"]))
    amount = st.sampled_from(["2", "0", "-1", "1e308", "1e-320", "nan", "inf", "99.9999", "1e6",
                              "0.3", ".", "1e", ""])
    text = st.one_of(
        st.builds(lambda a: f"+-{a}%", amount),
        st.builds(lambda a, u: f"+-{a} {u}", amount, st.sampled_from(["mm", "m", "rpm", "kg", "g", "x"])),
        st.builds(lambda a, b: f"{a}x..{b}x", amount, amount),
        st.text(max_size=12), st.floats(allow_nan=True), st.none())
    data["spreads"] = draw(st.dictionaries(path, text, min_size=1, max_size=4))
    return data


@settings(max_examples=60, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(spread_sets())
def test_rigs_with_any_spreads_are_read_or_refused_by_name(data):
    # Spreads are read or refused at a path under "spreads" (never another field, never a
    # traceback); the rigs that load have a set of rigs the planner can chart.
    from shakestill.equilibria.uncertainty import rig_set
    start = time.perf_counter()
    try:
        rig = ss.rig_from_dict(data)
    except ss.RigError as exc:
        assert all(p.path.startswith("spreads") and len(p.path) < 80 for p in exc.problems), exc.problems
    else:
        assert all(m.rig.spreads == () for m in rig_set(rig).models)
    reply = json.loads(bridge.handle(json.dumps({"op": "validate", "rig": data}, allow_nan=True)))
    assert reply["ok"] in (True, False) and ("error" not in reply), reply
    assert time.perf_counter() - start < CASE_SECONDS
