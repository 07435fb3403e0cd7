"""The page's own requests through the bridge, in Python: the chart's read-out (`point`), the
run-up panel (`runup`), the chart job (`job_start` / `job_step` / `job_cancel`), share links
(`share_encode` / `share_decode`) and the run-up words, each against an independent value.

The rigs are undamped point masses on massless links on a sine stroke, so the Mathieu chart
is the reference (scipy.special.mathieu_a / mathieu_b via tests/refsolvers.py), as in
tests/test_cli_paths.py and tests/test_runup.py.
"""

from __future__ import annotations

import json
import math

import pytest

import refsolvers as R
import shakestill as ss
from shakestill import bridge
from shakestill.render.report import runup_text
from test_runup import END, LENGTH as SHORT, RATE, rig_data as short_rig, tongue_rpm

G = R.G_STANDARD
LENGTH, STROKE, SPEED = 0.2, 0.02, 2400.0
LIMITS = {"speed_rpm": [300.0, 3600.0], "stroke_m": [0.0, 0.04]}


def rig():
    return R.rig([R.link(LENGTH, 0.0, [(0.1, LENGTH)])], R.sine(STROKE, SPEED), limits=LIMITS)


def ask(op, **fields):
    reply = json.loads(bridge.handle(json.dumps({"op": op, **fields})))
    assert reply["ok"], reply
    return reply


def inverted_window():
    return R.speed_window(LENGTH, G, STROKE, SPEED, "inverted", LIMITS["speed_rpm"])


def test_point_readout_follows_the_mathieu_edge():
    # Just inside and just outside the inverted window's lower edge (Mathieu chart, ~1e-12):
    # 0.1% either side is far wider than the engine's edge error (1e-8).
    low, _ = inverted_window()
    inside = ask("point", rig=rig(), speed_rpm=low * 1.001, stroke_m=STROKE)
    outside = ask("point", rig=rig(), speed_rpm=low * 0.999, stroke_m=STROKE)
    assert inside["inverted"]["stable"] is True and outside["inverted"]["stable"] is False
    # a sine's peak acceleration is (stroke / 2) w^2 (kinematics of simple harmonic motion)
    w = 2 * math.pi * low * 1.001 / 60
    assert inside["peak_accel_m_s2"] == pytest.approx(STROKE / 2 * w * w, rel=1e-12)


def test_point_readout_by_peak_acceleration_gives_the_stroke_of_that_acceleration():
    # The chart's acceleration view: stroke = 2 a / w^2 for a sine (the same formula inverted).
    w = 2 * math.pi * SPEED / 60
    reply = ask("point", rig=rig(), speed_rpm=SPEED, peak_accel_m_s2=500.0)
    assert reply["stroke_m"] == pytest.approx(2 * 500.0 / (w * w), rel=1e-12)
    assert reply["peak_accel_m_s2"] == pytest.approx(500.0, rel=1e-12)


def test_runup_request_crosses_the_mathieu_tongues():
    # The page's run-up: the principal hanging tongue between the speeds where
    # a = 4 g / (l w^2) meets a_1(q) and b_1(q), to 1e-9 relative (tests/test_runup.py).
    reply = ask("runup", rig=short_rig(), rate_rpm_s=RATE, end_rpm=END)["result"]
    ends = [(c["speed_from_rpm"], c["speed_to_rpm"]) for c in reply["hanging"]["crossings"]]
    lo, hi = tongue_rpm(1)
    assert any(a == pytest.approx(lo, rel=1e-9) and b == pytest.approx(hi, rel=1e-9)
               for a, b in ends), ends
    assert SHORT == 0.01  # the reference's rig (10 mm), as the tongues above assume


def test_runup_request_without_a_rate_runs_at_the_slowest_safe_rate():
    # No rate: the page gets the rate `shakestill runup` recommends, and at it every hanging
    # crossing grows at most the factor by the transfer matrix's largest singular value
    # (solve_ivp + numpy.svd, tests/test_runup.py's transfer_gain), 1e-9 relative.
    from test_runup import transfer_gain
    reply = ask("runup", rig=short_rig(), end_rpm=END, factor=10.0)["result"]
    assert reply["rate_recommended"] is True
    rate = reply["rate_rpm_s"]
    assert rate == max(c["min_rate_rpm_s"] for c in reply["hanging"]["crossings"])
    for c in reply["hanging"]["crossings"]:
        assert transfer_gain(c["speed_from_rpm"], c["speed_to_rpm"], rate) <= 10.0 * (1 + 1e-9)
    # a given rate is used as given
    assert ask("runup", rig=short_rig(), end_rpm=END, rate_rpm_s=RATE)["result"][
        "rate_recommended"] is False
    # nothing crossed (no stroke): no rate to recommend, and the field is named
    still = short_rig()
    still["drive"]["stroke_m"] = 0.0
    reply = json.loads(bridge.handle(json.dumps({"op": "runup", "rig": still})))
    assert not reply["ok"] and reply["problems"][0]["path"] == "rate_rpm_s"
    assert "no resonance of the hanging pendulum is crossed" in reply["problems"][0]["message"]
    # a factor that allows no growth is refused, named, before any rate is sought (the same
    # words as a run-up at a given rate: the documented rule, factor above 1)
    from shakestill.equilibria.runup import recommended_rate
    words = "factor: 1.0 must be a finite number above 1"
    with pytest.raises(ValueError, match=words):
        recommended_rate(ss.rig_from_dict(short_rig()), factor=1.0)
    reply = json.loads(bridge.handle(json.dumps({"op": "runup", "rig": short_rig(), "factor": 1.0})))
    assert not reply["ok"] and reply["problems"] == [{"path": "runup", "message": words}]


def test_runup_words_give_the_crossings_and_the_rate_for_them():
    # The text the CLI prints: each crossing's ends in rpm (the same Mathieu tongue) and the
    # minimum rate, read back from the words.
    reply = ask("runup", rig=short_rig(), rate_rpm_s=RATE, end_rpm=END)["result"]
    words = runup_text(reply)
    lo, hi = tongue_rpm(1)
    assert f"unstable from {lo:,.0f} rpm to {hi:,.0f} rpm" in words
    # three significant digits (common practice, no source); this rig's rate is under 1000
    rate = reply['hanging']['min_rate_rpm_s']
    assert rate < 1000 and f"ramp at least {rate:.3g} rpm/s" in words
    assert "Safety:" in words


def test_chart_job_rows_follow_the_mathieu_chart_and_cancel_ends_it():
    # job_start / job_step until done: every stroke row's top stable interval starts at the
    # Mathieu edge of that stroke (1e-6 relative, as tests/test_cli_paths.py); a cancelled
    # job is gone.
    job = ask("job_start", kind="chart", rig=rig(), rows=5)["job"]
    for _ in range(200):
        reply = ask("job_step", job=job, budget_ms=2000)
        if reply["done"]:
            break
    assert reply["done"] and reply["svg"].startswith("<svg")
    chart = reply["chart"]
    lo, hi = chart["speed_range_rpm"]
    checked = 0
    for row in chart["rows"]:
        ref = R.speed_window(LENGTH, G, row["y"], hi * 0.999, "inverted", [lo, hi]) \
            if row["y"] > 0 else None
        if ref is None:
            continue
        top = [iv for iv in row["inverted"]["stable_intervals_rpm"] if iv[1] >= hi * 0.999]
        assert len(top) == 1 and top[0][0] == pytest.approx(ref[0], rel=1e-6)
        checked += 1
    assert checked >= 3
    other = ask("job_start", kind="chart", rig=rig(), rows=5)["job"]
    assert ask("job_cancel", job=other)["cancelled"] is True
    gone = json.loads(bridge.handle(json.dumps({"op": "job_step", "job": other})))
    assert gone["ok"] is False


def test_share_link_round_trip_keeps_every_number():
    # A link made by the page and opened again gives back the same rig file, number for
    # number (equality: the encoding is lossless), and the view.
    data = rig()
    fragment = ask("share_encode", rig=data, view={"v": 1, "focus": "drive"})["fragment"]
    back = ask("share_decode", fragment=fragment)
    assert back["rig"] == ss.rig_to_dict(ss.rig_from_dict(data))
    assert back["view"]["focus"] == "drive"


@pytest.mark.parametrize("units, metres_per_unit, unit", [
    ("metric", 1e-3, "mm"), ("imperial", 0.0254, "in")])  # 1 in = 0.0254 m exactly (NIST SP 811)
def test_sketch_is_to_scale_against_its_own_scale_bar(units, metres_per_unit, unit):
    # "Drawn to scale": every link's line, measured in the SVG (Pythagoras on its end points),
    # divided by the scale bar's pixels per metre (its label read in the units asked for), is
    # the link's length from the rig file; the point masses sit at their at_m along it.
    # Coordinates are written to 0.01 px, so 0.5% of a line of some 50 px or more (common
    # practice, no source).
    import xml.etree.ElementTree as ET
    data = json.loads(json.dumps(ss.demo_rig_dict()))
    data["links"].append({"length_m": 0.12, "rod_mass_kg": 0.02,
                          "point_masses": [{"mass_kg": 0.01, "at_m": 0.1}]})
    svg = ET.fromstring(ask("schematic", rig=data, units=units)["svg"])
    ns = {"s": "http://www.w3.org/2000/svg"}
    lines = svg.findall("s:line", ns)
    bar = lines[-1]  # the scale bar, labelled in the text after it
    bar_px = float(bar.get("x2")) - float(bar.get("x1"))
    number, label_unit = svg.findall("s:text", ns)[-1].text.split()
    assert label_unit == unit
    bar_m = float(number) * metres_per_unit
    per_m = bar_px / bar_m
    links = [ln for ln in lines if ln.get("stroke-linecap") == "round"]
    assert len(links) == 2
    for line, link in zip(links, data["links"]):
        px = math.dist((float(line.get("x1")), float(line.get("y1"))),
                       (float(line.get("x2")), float(line.get("y2"))))
        assert px / per_m == pytest.approx(link["length_m"], rel=5e-3)
    bobs = [c for c in svg.findall("s:circle", ns) if c.find("s:title", ns) is not None]
    top = links[1]
    y_joint, y_bob = float(top.get("y1")), float(bobs[-1].get("cy"))
    assert (y_joint - y_bob) / per_m == pytest.approx(0.1, rel=5e-3)
    bad = json.loads(bridge.handle(json.dumps({"op": "schematic", "rig": data, "units": "cubits"})))
    assert bad["ok"] is False and [p["path"] for p in bad["problems"]] == ["units"]


def test_a_link_carries_the_senders_check_only_while_it_stays_short():
    # Decoded independently (RFC 4648 base64url, RFC 1950 zlib, JSON): the payload holds the
    # result given with the rig; a result over 60,000 characters is left out (the link
    # would become unwieldy), and the rig still travels.
    import base64
    import zlib

    def payload(fragment):
        body = fragment[len("s1."):]
        return json.loads(zlib.decompress(base64.urlsafe_b64decode(body + "=" * (-len(body) % 4))))

    result = {"ok": True, "result": {"title": "Reference rig", "speed_rpm": SPEED}}
    small = ask("share_encode", rig=rig(), result=result)["fragment"]
    assert payload(small)["result"] == result
    big = {"ok": True, "padding": "x" * 70_000}
    large = ask("share_encode", rig=rig(), result=big)["fragment"]
    assert "result" not in payload(large) and payload(large)["rig"]["title"] == "Reference rig"
    refused = json.loads(bridge.handle(json.dumps({"op": "share_encode", "rig": rig(),
                                                   "result": [1, 2]})))
    assert refused["ok"] is False and refused["problems"][0]["path"] == "result"


def test_chart_job_names_its_stroke_unit_and_refuses_others():
    # The page's display units: an imperial job labels the stroke axis in inches (1 in =
    # 0.0254 m, NIST SP 811) with its mapping still in metres; anything else is named.
    job = ask("job_start", kind="chart", rig=rig(), rows=3, units="imperial")["job"]
    reply = ask("job_step", job=job, budget_ms=2000)
    assert reply["axes"]["y"]["shown_unit"] == "in" and reply["axes"]["y"]["unit"] == "m"
    assert "stroke (in)" in reply["svg"]
    ask("job_cancel", job=job)
    bad = json.loads(bridge.handle(json.dumps({"op": "job_start", "kind": "chart", "rig": rig(),
                                               "units": "cubits"})))
    assert bad["ok"] is False and [p["path"] for p in bad["problems"]] == ["units"]
    assert "metric or imperial" in bad["problems"][0]["message"]
