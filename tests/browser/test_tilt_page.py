"""A drive off vertical on the page (issue 15): the tilt fields of the rig sheet, the verdict's
lean and tilt tolerance, the sketch's tilted axis, the lean chart, the animation's leaning
orbit, the guide's sideways force, bad input, contrast and names, screenshots.

One page of the demo rig with its drive tilted 2 deg is opened for the module; the tests run
in file order on it. Independent values: the core on CPython (the command line's `check
--json`, `shakestill.bridge.call` for the same requests the page sent) and geometry.
"""

from __future__ import annotations

import json
import math

import pytest
from shakestill import bridge

from pagekit import (ARTIFACTS, RESULT_TIMEOUT_MS, assert_same_numbers, cli_check, open_watched, shot,
                     wait_for_stale)
from test_access import UNNAMED, failures

pytestmark = pytest.mark.browser

TILT = '[data-path="drive.axis_tilt_deg"]'
LONG_MS = 300_000  # the lean chart: some 200 orbit solves in Pyodide


@pytest.fixture(scope="module")
def tilted_page(browser, server):
    page = open_watched(browser, server.url)
    page.click("details.drive-path > summary")
    page.fill(TILT, "2")
    page.wait_for_function("() => 'lean_deg' in JSON.parse(document.getElementById('check-report')"
                           ".dataset.result).inverted", timeout=RESULT_TIMEOUT_MS)
    yield page
    page.context.close()


def rig_of(page) -> dict:
    return json.loads(page.get_attribute("#check-report", "data-rig"))


def test_the_verdict_gives_the_lean_and_tilt_tolerance_of_the_command_line(tilted_page, tmp_path):
    # The same rig through `shakestill check --json` on CPython: every number to 1e-9
    # relative (Pyodide's libm may differ in the last bit; the orbit's Newton is the same).
    page = tilted_page
    rig = rig_of(page)
    assert rig["drive"]["axis_tilt_deg"] == 2.0
    got = json.loads(page.get_attribute("#check-report", "data-result"))
    want = cli_check(rig, tmp_path)
    assert_same_numbers(got, want, rel=1e-9, abs_tol=1e-12)
    card = page.locator('.eq-card[data-eq="inverted"]').inner_text()
    lean = want["inverted"]["lean_deg"][0]
    assert "Mean lean" in card and f"{float(f'{lean:.3g}'):g}°" in card  # the page's 3 figures
    page.locator("section.verdict").screenshot(path=str(ARTIFACTS / "tilt-verdict.png"))
    tol = page.locator(".tilt-tolerance")
    assert float(tol.get_attribute("data-value")) == pytest.approx(want["tilt_tolerance_deg"],
                                                                    rel=1e-9)


def test_the_sketch_turns_the_drive_onto_the_tilted_axis(tilted_page):
    # Geometry: the dashed axis line runs 2 deg off vertical (atan of its run over its rise),
    # top end to positive x; the carriage group is turned by the same angle.
    page = tilted_page
    line = page.evaluate("""() => { const l = [...document.querySelectorAll('#schematic svg line')]
        .find((el) => (el.querySelector('title') || {}).textContent?.startsWith('drive axis'));
        return ['x1', 'y1', 'x2', 'y2'].map((a) => Number(l.getAttribute(a))); }""")
    x1, y1, x2, y2 = line
    assert math.degrees(math.atan2(x2 - x1, y1 - y2)) == pytest.approx(2.0, abs=0.05)  # 2 dp
    assert page.locator('#schematic svg g[transform^="rotate(2 "]').count() == 1


def test_the_sketch_draws_the_links_at_the_held_orbits_lean(tilted_page):
    # Once checked, the sketch is redrawn at the check's inverted lean (which the first test
    # holds to the command line's): the rod runs at that angle from the upward vertical
    # (geometry: atan2 of its run over its rise, 0.01 deg for the SVG's 2 decimals).
    page = tilted_page
    lean = json.loads(page.get_attribute("#check-report", "data-result"))["inverted"]["lean_deg"]
    page.wait_for_selector("#schematic svg[data-lean-deg]", timeout=RESULT_TIMEOUT_MS)
    rod = page.evaluate("""() => { const l = document.querySelector(
        '#schematic svg line[stroke-linecap="round"]');
        return ['x1', 'y1', 'x2', 'y2'].map((a) => Number(l.getAttribute(a))); }""")
    x1, y1, x2, y2 = rod
    assert math.degrees(math.atan2(x2 - x1, y1 - y2)) == pytest.approx(lean[0], abs=0.01)
    assert "mean lean" in page.locator("#schematic svg .lean-reference").text_content()


def test_the_map_says_it_is_of_the_vertical_drive(tilted_page):
    # The map is of the vertical drive; off vertical it says so on the picture, naming the
    # rig's tilt (the core's words, tests/test_tilt_drawings.py).
    page = tilted_page
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state === 'done'",
                           timeout=LONG_MS)
    words = page.locator("#stability-chart svg .map-vertical-only").text_content()
    assert "vertical drive" in words and "2 deg axis tilt" in words
    # the held orbit's windows through the operating point are the check's (which the first
    # test holds to the command line's, and tests/test_tilt_edges.py to scipy), to 1e-8
    # relative (the bar's data carries 9 figures)
    result = json.loads(page.get_attribute("#check-report", "data-result"))
    for name, key, axis in (("inverted", "speed_window_rpm", "speed"),
                            ("inverted", "stroke_window_m", "stroke"),
                            ("hanging", "speed_window_rpm", "speed")):
        got = page.get_attribute(f"#stability-chart svg line.held-{name}-{axis}", "data-window")
        assert [float(v) for v in got.split(",")] == pytest.approx(result[name][key], rel=1e-8)
    shot(page, "tilt-map-page")
    page.locator("#stability-chart").screenshot(path=str(ARTIFACTS / "tilt-map.png"))


def test_the_lean_chart_is_the_cores(tilted_page):
    # The page's lean chart (the `lean` motion job in Pyodide) against the `lean` op of the
    # core on CPython for the same rig: every lean to 1e-7 relative (the loose Newton of
    # each point stops at the same iterate on both), the same ends.
    page = tilted_page
    page.click("#lean-go")
    page.wait_for_function("() => document.getElementById('lean-chart').dataset.state === 'fresh'",
                           timeout=LONG_MS)
    got = json.loads(page.get_attribute("#lean-chart", "data-result"))
    want = bridge.call({"op": "lean", "rig": rig_of(page)})["result"]
    assert_same_numbers(got, want, rel=1e-7, abs_tol=1e-10, where="lean")
    assert page.locator("#lean-chart svg.lean-chart").count() == 1
    assert page.locator("#lean-chart .safety-pointer a[href='#safety-h']").count() == 1
    page.wait_for_function("() => !document.querySelector("
                           "'button[data-save-from=\"lean-chart\"][data-save-as=\"svg\"]').disabled")
    shot(page, "tilt-lean-chart-page")
    page.locator("section.lean").screenshot(path=str(ARTIFACTS / "tilt-lean-chart.png"))


def test_the_animation_leans_and_rides_the_tilted_axis(tilted_page):
    # A blank start angle starts at rest, which off vertical is the held orbit: the dashed
    # lean line is at the check's mean lean (the same held orbit, to 1e-9 deg) and the
    # strobe samples stay on it; the rails are turned by the tilt; the carriage is drawn at
    # the pivot's position of the core's frame (x_m[0], y_m[0]) within 1 px.
    page = tilted_page
    page.fill("#motion-angle", "")
    page.click("#motion-run")
    page.wait_for_function("""() => { const el = document.querySelector('#motion-anim');
        return el.dataset.state === 'fresh' && document.getElementById('motion-cancel').hidden; }""",
                           timeout=RESULT_TIMEOUT_MS)
    result = json.loads(page.get_attribute("#check-report", "data-result"))
    lean = float(page.get_attribute("#motion-anim .anim-lean", "data-lean-deg"))
    assert lean == pytest.approx(result["inverted"]["lean_deg"][0], abs=1e-9)
    assert page.locator('#motion-anim g.anim-axis[transform^="rotate(2 "]').count() == 1
    request = json.loads(page.get_attribute("#motion-anim", "data-request"))
    assert "angles_rad" not in request
    ref = bridge.call({"op": "simulate", "rig": rig_of(page), **request})
    strobe = [q[0] for q in ref["strobe"]["angles_rad"]]
    assert max(strobe) - min(strobe) < 1e-6  # rad: once per cycle it is where it started
    scale = json.loads(page.get_attribute("#motion-anim", "data-scale"))
    page.evaluate("""() => { const el = document.getElementById('motion-time');
        el.value = '0'; el.dispatchEvent(new Event('input', {bubbles: true})); }""")
    car = page.evaluate("""() => { const c = document.querySelector('#motion-anim .anim-carriage');
        return [Number(c.getAttribute('x')) + Number(c.getAttribute('width')) / 2,
                Number(c.getAttribute('y')) + Number(c.getAttribute('height')) / 2]; }""")
    x0, y0 = ref["frames"]["x_m"][0][0], ref["frames"]["y_m"][0][0]
    want = (scale["x0_px"] + x0 * scale["px_per_m"], scale["y0_px"] - y0 * scale["px_per_m"])
    assert car == pytest.approx(list(want), abs=1.0)
    page.locator("section.motion").screenshot(path=str(ARTIFACTS / "tilt-motion.png"))
    page.locator("section.sketch").screenshot(path=str(ARTIFACTS / "tilt-sketch.png"))


def test_loads_show_the_sideways_force_on_the_guide(tilted_page, tmp_path):
    # The loads row against the core's `loads` op on CPython (rel 1e-9).
    page = tilted_page
    page.click("#loads-go")
    page.wait_for_function("() => document.getElementById('loads-result').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    got = json.loads(page.get_attribute("#loads-result", "data-result"))
    want = bridge.call({"op": "loads", "rig": rig_of(page), "equilibrium": "inverted"})["result"]
    assert got["guide_force_N"]["peak"] == pytest.approx(want["guide_force_N"]["peak"], rel=1e-9)
    assert page.locator('#loads-result tr[data-key="guide_force_peak"]').count() == 1


def test_a_bad_tilt_is_named_beside_its_field_and_contrast_holds(tilted_page):
    # The core's words for a tilt past -90..90 appear beside the field; the page keeps its
    # contrast (WCAG 2.2 SC 1.4.3, test_access.py's measure) and every control is named.
    page = tilted_page
    page.fill(TILT, "1e6")
    wait_for_stale(page)
    msg = page.locator("#m-drive-axis_tilt_deg")
    msg.wait_for(state="visible")
    assert "-90 to 90 deg" in msg.inner_text()
    assert failures(page) == []
    assert page.evaluate(UNNAMED) == []
    shot(page, "tilt-bad-input")
    page.locator("fieldset.drive").screenshot(path=str(ARTIFACTS / "tilt-sheet-drive.png"))
    page.fill(TILT, "2")
    page.wait_for_function("() => document.getElementById('check-report').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    assert page.errors == []
