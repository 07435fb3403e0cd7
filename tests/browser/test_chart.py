"""The stability map and the run-up on the page, in headless Chromium.

One page is opened for the whole module (the map of the demo rig takes tens
of seconds of engine time in Pyodide) and the tests run in file order on it:
the map, the cursor read-out, the run-up, clicking and the keyboard, cancel,
print and the screenshots. Independent values: the core on CPython
(shakestill.bridge.call) and the command line (`shakestill runup --json`,
`shakestill check --json`).
"""

from __future__ import annotations

import json
import math
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import shakestill as ss
from shakestill import bridge

from pagekit import (BOOT_TIMEOUT_MS, assert_map_csv_is_the_cli_chart, CHROMIUM, CHROMIUM_ARGS, LAPTOP, RESULT_TIMEOUT_MS,
                     TABLET_PORTRAIT, TOUCH_SIZES, assert_same_numbers, cli_check, shot, wait_for_result,
                     wait_for_rig)

pytestmark = pytest.mark.browser

CHART = "#stability-chart"


@pytest.fixture(scope="module")
def map_page(browser, server):
    """The demo rig's page with its map complete."""
    context = browser.new_context(viewport=LAPTOP)
    page = context.new_page()
    errors = []
    page.on("pageerror", lambda err: errors.append(str(err)))
    page.goto(server.url)
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    wait_for_map(page)
    page.errors = errors
    yield page
    context.close()


def wait_for_map(page, timeout=RESULT_TIMEOUT_MS):
    page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'done'",
                           timeout=timeout)


def axes_of(page) -> dict:
    return json.loads(page.get_attribute(CHART, "data-axes"))


def per_px(axis: dict) -> float:
    return abs((axis["max"] - axis["min"]) / (axis["px_max"] - axis["px_min"]))


def svg_box(page):
    """The SVG's user space on screen: (left, top, scale), the box scaled uniformly to the
    element and centred (SVG 1.1, preserveAspectRatio xMidYMid meet)."""
    page.locator(CHART).scroll_into_view_if_needed()
    box = page.evaluate(f"""() => {{ const r = document.querySelector('{CHART} svg').getBoundingClientRect();
        return [r.left, r.top, r.width, r.height]; }}""")
    axes = axes_of(page)
    scale = min(box[2] / axes["width_px"], box[3] / axes["height_px"])
    return (box[0] + (box[2] - axes["width_px"] * scale) / 2,
            box[1] + (box[3] - axes["height_px"] * scale) / 2, scale)


def client_point(page, px: float, py: float) -> tuple[float, float]:
    """Where an SVG user-space point lands on screen."""
    left, top, scale = svg_box(page)
    return left + px * scale, top + py * scale


def at_fraction(page, fx: float, fy: float):
    """Screen point at fractions of the plotting box, and the axis values the mapping gives there
    (px = px_min + (v - min) / (max - min) * (px_max - px_min), solved for v)."""
    a = axes_of(page)
    px = a["x"]["px_min"] + fx * (a["x"]["px_max"] - a["x"]["px_min"])
    py = a["y"]["px_min"] + fy * (a["y"]["px_max"] - a["y"]["px_min"])
    value = lambda ax, p: ax["min"] + (p - ax["px_min"]) / (ax["px_max"] - ax["px_min"]) * (ax["max"] - ax["min"])
    return client_point(page, px, py), (value(a["x"], px), value(a["y"], py))


def number_in(text: str, unit: str) -> float:
    value, got = text.split()
    assert got == unit, text
    return float(value)


def cli(*args) -> dict:
    exe = shutil.which("shakestill", path=str(Path(sys.executable).parent)) or shutil.which("shakestill")
    command = [exe] if exe else [sys.executable, "-m", "shakestill.cli"]
    done = subprocess.run([*command, *args], capture_output=True, text=True, timeout=300)
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


def page_rig(page) -> dict:
    return json.loads(page.get_attribute("#check-report", "data-rig"))


def test_map_appears_for_the_demo_rig(map_page):
    page = map_page
    assert page.locator(f"{CHART} svg").count() == 1
    assert page.evaluate("document.getElementById('chart-progress').value") == 1
    assert page.is_hidden("#chart-cancel")
    # Independent reading: the same job run to the end by the core on CPython.
    start = bridge.call({"op": "job_start", "kind": "chart", "rig": ss.rig_to_dict(ss.demo_rig()),
                         "y_axis": "stroke"})
    # Step until done: one step works at most MAX_BUDGET_MS (5 s) of wall clock, which a loaded
    # machine (parallel test workers) can spend before the chart is finished.
    while not (step := bridge.call({"op": "job_step", "job": start["job"], "budget_ms": 5000}))["done"]:
        assert step["ok"], step
    assert int(page.get_attribute(CHART, "data-rows")) == len(step["chart"]["rows"])
    assert_same_numbers(axes_of(page), step["axes"], rel=1e-12, where="axes")
    assert page.errors == []


def test_readout_shows_the_point_op_numbers(map_page):
    page = map_page
    (cx, cy), (speed, stroke) = at_fraction(page, 0.62, 0.55)
    page.mouse.move(cx, cy)
    page.wait_for_function("() => document.getElementById('chart-readout').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    got = json.loads(page.get_attribute("#chart-readout", "data-point"))
    a = axes_of(page)
    # The read-out is for the point under the pointer, within half a pixel's worth.
    assert abs(got["speed_rpm"] - speed) <= 0.5 * per_px(a["x"])
    assert abs(got["stroke_m"] - stroke) <= 0.5 * per_px(a["y"])
    # Independent value: the core on CPython at the same point, 1e-9 relative.
    want = bridge.call({"op": "point", "rig": page_rig(page), "speed_rpm": got["speed_rpm"],
                        "stroke_m": got["stroke_m"]})
    assert_same_numbers(got, want, rel=1e-9, where="point")
    text = page.inner_text("#chart-readout")
    for eq in ("inverted", "hanging"):
        shown = float(f"{want[eq]['max_multiplier']:.7g}")
        assert f"largest multiplier {shown:g}" in text or f"largest multiplier {shown!r}" in text, text


def test_runup_lists_the_demo_hanging_crossing_as_the_cli(map_page):
    page = map_page
    page.fill("#runup-rate", "20")
    page.click("#runup-go")
    page.wait_for_function("() => document.getElementById('runup-result').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    got = json.loads(page.get_attribute("#runup-result", "data-result"))
    # Independent value: the command line on the demo rig, 1e-9 relative.
    want = cli("runup", "--rate", "20rpm/s", "--json")
    assert_same_numbers(got, want, rel=1e-9, where="runup")
    hanging = want["hanging"]["crossings"]
    assert hanging, "the demo rig's run-up passes a hanging resonance"
    item = page.locator(".crossing[data-eq=hanging]").first
    words = item.inner_text()
    c = hanging[0]
    for key in ("speed_from_rpm", "speed_to_rpm"):  # shown to 4 significant digits
        assert f"{float(format(c[key], '.4g')):g}" in words, words
    # The inverted position cannot be run up through at 20 rpm/s: the page must say so plainly.
    assert not want["inverted"]["ok"]
    assert "NOT MET" in page.locator(".crossing[data-eq=inverted]").first.inner_text()


def test_a_click_shows_the_point_and_a_second_one_moves_the_operating_point(map_page, tmp_path):
    # The first click shows the point and its verdict (the `point` op: the core's stability
    # there on CPython, 1e-9) and moves nothing; a second click on it makes it the operating
    # point, one step that Undo takes back.
    page = map_page
    old = page.get_attribute("#check-report", "data-result")
    typed = page.input_value('[data-path="drive.speed_rpm"]')
    (cx, cy), (speed, stroke) = at_fraction(page, 0.7, 0.4)
    page.mouse.click(cx, cy)
    page.wait_for_selector("#chart-apply-point", timeout=RESULT_TIMEOUT_MS)
    shown = json.loads(page.get_attribute("#chart-readout", "data-point"))
    for eq in ("inverted", "hanging"):
        want = ss.stability(ss.demo_rig(), eq, shown["speed_rpm"], shown["stroke_m"])
        assert shown[eq]["stable"] == want.stable
        assert shown[eq]["max_multiplier"] == pytest.approx(want.max_multiplier, rel=1e-9)
    assert page.get_attribute("#check-report", "data-result") == old
    assert page.input_value('[data-path="drive.speed_rpm"]') == typed
    page.mouse.click(cx, cy)
    result = wait_for_result(page, old)
    a = axes_of(page)
    typed_speed = number_in(page.input_value('[data-path="drive.speed_rpm"]'), "rpm")
    typed_stroke = number_in(page.input_value('[data-path="drive.stroke_m"]'), "mm") / 1000
    assert abs(typed_speed - speed) <= 0.5 * per_px(a["x"])
    assert abs(typed_stroke - stroke) <= 0.5 * per_px(a["y"])
    # The check followed, as for a typed edit: equal to the command line for the moved rig.
    rig = ss.rig_to_dict(ss.demo_rig())
    rig["drive"]["speed_rpm"], rig["drive"]["stroke_m"] = typed_speed, typed_stroke
    assert_same_numbers(result, cli_check(rig, tmp_path))
    moved = page.get_attribute("#check-report", "data-result")
    page.click("#undo")
    back = wait_for_result(page, moved)
    assert page.input_value('[data-path="drive.speed_rpm"]') == typed
    assert back == json.loads(old)


def test_keyboard_moves_a_cursor_and_enter_applies(map_page):
    page = map_page
    old = page.get_attribute("#check-report", "data-result")
    before = json.loads(old)
    a = axes_of(page)
    page.focus(CHART)
    for _ in range(3):
        page.keyboard.press("ArrowLeft")
    page.keyboard.press("Enter")
    result = wait_for_result(page, old)
    # Three steps of 1% of the speed axis from the operating point (the page's KEY_STEP).
    want = before["speed_rpm"] - 3 * 0.01 * (a["x"]["max"] - a["x"]["min"])
    assert abs(result["speed_rpm"] - want) <= 0.5 * per_px(a["x"])
    assert result["stroke_m"] == pytest.approx(before["stroke_m"], abs=0.5 * per_px(a["y"]))


# Three damped links (bench/bench_chart.py's three-link rig): a map that takes seconds in the
# page, so a test can act while it runs. The demo rig's map is done within one step of the job.
SLOW_LINKS = [{"length_m": 0.15, "rod_mass_kg": 0.03, "joint_damping_N_m_s": 2e-4},
              {"length_m": 0.12, "rod_mass_kg": 0.02,
               "point_masses": [{"mass_kg": 0.01, "at_m": 0.12}], "joint_damping_N_m_s": 1e-4},
              {"length_m": 0.08, "rod_mass_kg": 0.01,
               "point_masses": [{"mass_kg": 0.006, "at_m": 0.08}], "joint_damping_N_m_s": 1e-4}]
SLOW_TITLE = "Three links, a slow map"


def open_slow_map_rig(page, tmp_path, whole_map: bool = True) -> None:
    """The slow map's rig opened from a file; its own map (which follows by itself) drawn to
    its end, or with ``whole_map`` False cancelled once it runs, for a test that draws it again."""
    rig = page_rig(page)
    if rig["title"] == SLOW_TITLE:  # an earlier test of the module opened it: no change, no redraw
        wait_for_map(page)
        return
    rig.update(title=SLOW_TITLE, links=SLOW_LINKS)
    rig["drive"].update(waveform="sine", stroke_m=0.016)
    path = tmp_path / "three-links.json"
    path.write_text(json.dumps(rig))
    page.set_input_files("#open-file", str(path))
    wait_for_rig(page, SLOW_TITLE)
    # The opened rig's own map follows on its own (after the pause for edits); wait for it to
    # start and end, or it would start again under the test's feet.
    page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'running'",
                           timeout=RESULT_TIMEOUT_MS)
    if whole_map:
        wait_for_map(page)
    else:
        page.click("#chart-cancel")
        page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'cancelled'",
                               timeout=RESULT_TIMEOUT_MS)


def test_cancel_stops_the_job(map_page, tmp_path):
    page = map_page
    # the rig's own map is not needed whole: the one drawn again below is the one cancelled
    # and then drawn to its end (for the module's later tests)
    open_slow_map_rig(page, tmp_path, whole_map=False)
    page.click("#chart-redraw")
    page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'running'"
                           f" && Number(document.querySelector('{CHART}').dataset.rows) < 30"
                           " && document.getElementById('chart-progress').value > 0", timeout=RESULT_TIMEOUT_MS)
    page.click("#chart-cancel")
    rows = page.get_attribute(CHART, "data-rows")
    progress = page.evaluate("document.getElementById('chart-progress').value")
    page.wait_for_timeout(2500)  # a running job adds several rows a second here
    assert page.get_attribute(CHART, "data-state") == "cancelled"
    assert page.get_attribute(CHART, "data-rows") == rows
    assert page.evaluate("document.getElementById('chart-progress').value") == progress < 1
    assert "cancelled" in page.inner_text("#chart-status").lower()
    assert page.is_hidden("#chart-cancel")
    page.click("#chart-redraw")
    wait_for_map(page)


def test_print_carries_the_map(map_page):
    page = map_page
    page.emulate_media(media="print")
    visible = """(sel) => [...document.querySelectorAll(sel)].filter((el) => {
        const r = el.getBoundingClientRect(); return r.width > 0 && r.height > 0; }).length"""
    assert page.evaluate(visible, f"{CHART} svg") == 1
    assert page.evaluate(visible, ".map-tools, .readout, .runup-form") == 0
    page.emulate_media(media="screen")


@pytest.mark.parametrize("viewport,name", [(LAPTOP, "laptop"), (TABLET_PORTRAIT, "tablet-portrait")])
def test_screenshots_of_the_map_panel(map_page, viewport, name):
    page = map_page
    page.set_viewport_size(viewport)
    page.wait_for_timeout(200)
    panel = page.locator("section.map")
    (cx, cy), _ = at_fraction(page, 0.5, 0.5)
    page.mouse.move(cx, cy)
    page.wait_for_function("() => document.getElementById('chart-readout').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    from pagekit import ARTIFACTS
    ARTIFACTS.mkdir(exist_ok=True)
    panel.screenshot(path=str(ARTIFACTS / f"{name}-map-panel.png"))
    # Nothing may scroll sideways (CSS px of the page equal the viewport's).
    assert page.evaluate("document.documentElement.scrollWidth") == viewport["width"]


def test_rig_edit_stops_the_map_and_draws_it_again(map_page, tmp_path):
    page = map_page
    page.set_viewport_size(LAPTOP)
    open_slow_map_rig(page, tmp_path)
    page.click("#chart-redraw")
    page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'running'"
                           f" && Number(document.querySelector('{CHART}').dataset.rows) < 30", timeout=RESULT_TIMEOUT_MS)
    page.fill('[data-path="links[0].length_m"]', "0.26 m")
    page.wait_for_function("() => document.getElementById('chart-status').textContent.includes('drawn again')",
                           timeout=RESULT_TIMEOUT_MS)
    rows = page.get_attribute(CHART, "data-rows")
    page.wait_for_timeout(1000)  # inside the pause before the redraw: nothing is computed
    assert page.get_attribute(CHART, "data-rows") == rows
    # Then a new job of the edited rig: its axes follow the core's mapping for that rig.
    page.wait_for_function(f"() => document.querySelector('{CHART}').dataset.state === 'running'"
                           f" && Number(document.querySelector('{CHART}').dataset.rows) < 30", timeout=RESULT_TIMEOUT_MS)
    rig = page_rig(page)
    assert rig["links"][0]["length_m"] == pytest.approx(0.26, rel=1e-12)


@pytest.mark.parametrize("size", sorted(TOUCH_SIZES))
def test_a_tap_shows_the_point_and_its_button_moves_the_operating_point(new_context, server, size):
    page = new_context(**TOUCH_SIZES[size]).new_page()
    page.goto(server.url)
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    old = page.get_attribute("#check-report", "data-result")
    page.wait_for_selector(f"{CHART} svg", timeout=RESULT_TIMEOUT_MS)  # the first picture has the axes
    a = axes_of(page)
    (cx, cy), _ = at_fraction(page, 0.3, 0.8)
    cx, cy = round(cx), round(cy)  # a finger lands on whole CSS pixels
    left, top, scale = svg_box(page)
    value = lambda ax, p: ax["min"] + (p - ax["px_min"]) / (ax["px_max"] - ax["px_min"]) * (ax["max"] - ax["min"])
    speed, stroke = value(a["x"], (cx - left) / scale), value(a["y"], (cy - top) / scale)
    page.touchscreen.tap(cx, cy)  # the first tap shows the point and its verdict
    page.wait_for_selector("#chart-apply-point", timeout=RESULT_TIMEOUT_MS)
    assert page.get_attribute("#check-report", "data-result") == old
    shot(page, f"{size}-map-point-shown")
    page.tap("#chart-apply-point")  # the button makes it the operating point
    result = wait_for_result(page, old)
    assert abs(result["speed_rpm"] - speed) <= 0.5 * per_px(a["x"])
    assert abs(result["stroke_m"] - stroke) <= 0.5 * per_px(a["y"])
    shot(page, f"{size}-map-tapped")


def test_the_map_saves_as_svg_png_and_csv(map_page, tmp_path):
    # SVG: the picture as drawn, without the moving cursor. PNG: a true PNG (its signature,
    # ISO/IEC 15948) twice the SVG's size. CSV: every row's stable intervals, which must be
    # the command line's `chart --json` of the same rig to 1e-9 (Pyodide and CPython may
    # differ in the last bits of libm, as in tests/test_pyodide.py).
    import struct
    import xml.etree.ElementTree as ET
    page = map_page
    wait_for_map(page)
    with page.expect_download() as got:
        page.click("#chart-save-svg")
    svg = ET.parse(got.value.path()).getroot()
    assert svg.tag.endswith("svg") and not svg.findall(".//*[@class='chart-cursor']")
    width = float(svg.get("viewBox").split()[2])
    with page.expect_download() as got:
        page.click("#chart-save-png")
    png = open(got.value.path(), "rb").read()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert struct.unpack(">I", png[16:20])[0] == round(2 * width)
    with page.expect_download() as got:
        page.click("#chart-save-csv")
    assert got.value.suggested_filename == "stability-map-stroke.csv"
    assert_map_csv_is_the_cli_chart(page, got.value.path(), tmp_path)  # earlier tests edit it
