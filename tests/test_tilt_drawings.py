"""A drive off vertical in the drawings (issue 15): the sketch at the held orbit's lean, and
the stability map's plain statement that it is of the vertical drive."""

import json
import math
import re

import pytest
from shakestill.bridge import call

from test_tilt import tilted
import refsolvers as ref


def one_link(tilt: float) -> dict:
    data = ref.rig([ref.link(0.25, 0.04, [(0.025, 0.24)], 0.0, 3e-4)], ref.crank(0.024, 0.08, 2700.0),
                   {"speed_rpm": [300, 3600], "stroke_m": [0, 0.036]})
    return tilted(data, tilt) if tilt else data


def test_the_sketch_draws_the_link_at_the_checks_lean():
    # Geometry: the rod's line runs at the check's inverted lean from the upward vertical
    # (atan2 of its run over its rise, 0.01 deg: the SVG's 2 decimals over ~150 px).
    data = one_link(1.0)
    lean = call({"op": "check", "rig": data})["result"]["inverted"]["lean_deg"]
    svg = call({"op": "schematic", "rig": data, "lean_deg": lean})["svg"]
    assert f'data-lean-deg="{lean[0]:.6g}"' in svg
    rod = re.search(r'<line x1="([\d.]+)" y1="([\d.]+)" x2="([\d.]+)" y2="([\d.]+)" '
                    r'stroke="[^"]+" stroke-width="[\d.]+" stroke-linecap="round"', svg)
    x1, y1, x2, y2 = map(float, rod.groups())
    assert math.degrees(math.atan2(x2 - x1, y1 - y2)) == pytest.approx(lean[0], abs=0.01)
    assert "upward vertical" in svg and f"{lean[0]:+.2f} deg" in svg


def test_a_bad_lean_for_the_sketch_is_named():
    for bad in ([1e9], "x", [1.0, 2.0], [float("nan")], [True]):
        reply = call({"op": "schematic", "rig": one_link(1.0), "lean_deg": bad})
        assert not reply["ok"] and reply["problems"][0]["path"] == "lean_deg"
        assert "one angle per link" in reply["problems"][0]["message"]


def test_the_map_says_it_is_of_the_vertical_drive_and_a_vertical_rigs_map_is_unchanged(tmp_path):
    # A vertical rig's chart JSON and SVG have none of it (tilt 0 reproduces today's
    # output: common practice, no source); a tilted rig's say what the map leaves out.
    from shakestill.equilibria.chart import chart, chart_dict
    from shakestill.model.rigfile import rig_from_dict
    from shakestill.render.chart_svg import render
    flat, tilt = rig_from_dict(one_link(0.0)), rig_from_dict(one_link(1.0))
    c_flat, c_tilt = chart(flat, rows=5), chart(tilt, rows=5)
    d_flat, d_tilt = chart_dict(c_flat), chart_dict(c_tilt)
    assert "drive_as_mapped" not in d_flat and "map-vertical-only" not in render(c_flat, flat)[0]
    assert d_tilt["drive_as_mapped"] == "vertical" and d_tilt["rig_axis_tilt_deg"] == 1.0
    assert d_flat["rows"] == d_tilt["rows"]  # the map is the vertical drive's, tilt or not
    svg = render(c_tilt, tilt)[0]
    assert "map-vertical-only" in svg and "1 deg axis tilt is not in this map" in svg
    json.dumps(d_tilt, allow_nan=False)


def test_the_map_carries_the_held_orbits_windows_through_the_operating_point():
    # The chart job's finished map (bridge) carries the check's held-orbit windows
    # (tests/test_tilt_edges.py holds those to scipy) and draws each as a bar whose ends sit
    # at the axis mapping's pixels of the window ends (geometry: the mapping is linear, 0.01 px
    # for the SVG's 2 decimals).
    data = one_link(1.0)
    checked = call({"op": "check", "rig": data})["result"]
    job = call({"op": "job_start", "kind": "chart", "rig": data, "rows": 5})["job"]
    while True:
        step = call({"op": "job_step", "job": job, "budget_ms": 60_000})
        if step["done"]:
            break
    held = step["chart"]["held_orbit"]
    for name in ("inverted", "hanging"):
        assert held[name]["speed_window_rpm"] == checked[name]["speed_window_rpm"]
        assert held[name]["stroke_window_m"] == checked[name]["stroke_window_m"]
    x = step["axes"]["x"]
    bar = re.search(r'<line class="held-inverted-speed" x1="([\d.]+)"[^>]*x2="([\d.]+)"',
                    step["svg"])
    lo, hi = held["inverted"]["speed_window_rpm"]
    for got, v in zip(map(float, bar.groups()), (lo, hi)):
        want = x["px_min"] + (v - x["min"]) / (x["max"] - x["min"]) * (x["px_max"] - x["px_min"])
        assert got == pytest.approx(want, abs=0.01)
    assert "held orbit, inverted: stable from" in step["svg"]
