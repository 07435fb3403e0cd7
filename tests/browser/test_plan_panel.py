"""Choosing the operating point on the page: the rig's spreads typed in the plan panel go into
the rig (one undo step), the plan job runs with progress and Cancel, its result is the command
line's plan of the same rig, the robust region and the recommended point are drawn on the map
where the core's axes put them, the button makes the recommendation the operating point (one
undo step), and the panel passes the page's accessibility checks and the axe-core audit."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
import shakestill as ss  # the core on CPython: the independent reading
from shakestill.model import share

from pagekit import (ARTIFACTS, cli_json, RESULT_TIMEOUT_MS, TABLET_PORTRAIT, assert_same_numbers, axe_violations, open_page, shot,
                     wait_for_result, wait_for_rig, wait_for_stale)
from test_access import SMALL_TARGETS, UNNAMED, failures

pytestmark = pytest.mark.browser

SPREADS = {"links[0].length_m": "+-2%", "links[0].joint_damping_N_m_s": "0.5x..2x",
           "drive.speed_rpm": "+-1%", "drive.stroke_m": "+-0.3 mm"}


def sine_rig(spreads=SPREADS) -> dict:
    """The demo rig on a sine drive (a plan of a few seconds in the page), with spreads."""
    data = ss.demo_rig_dict()
    data["title"] = "Plan test rig"
    data["drive"] = {"waveform": "sine", "stroke_m": 0.024, "speed_rpm": 2700}
    data["spreads"] = dict(spreads)
    return data


def open_with(page, server, rig: dict) -> dict:
    """The page opened on a share link of ``rig`` (made by the core on CPython)."""
    return open_page(page, f"{server.url}#{share.encode(rig)}")


def show_on(page, server, rig: dict) -> dict:
    """The reset demo page (conftest.demo_page) given a share link of ``rig`` (the hashchange
    path: same page, new fragment); returns that rig's check."""
    page.goto(f"{server.url}#{share.encode(rig)}")
    # the demo rig has no spreads: a rig on the sheet that holds these is the link's
    return wait_for_rig(page, json.dumps({"drive.speed_rpm": rig["spreads"]["drive.speed_rpm"]},
                                         separators=(",", ":"))[1:-1])


def cli_plan(rig: dict, tmp_path: Path) -> dict:
    """`shakestill plan RIG --json`, as the command line gives it."""
    return cli_json("plan", rig, tmp_path, timeout=600)


def run_plan(page) -> dict:
    page.click("#plan-go")
    page.wait_for_function("() => ['fresh', 'failed'].includes("
                           "document.getElementById('plan-result').dataset.state)",
                           timeout=RESULT_TIMEOUT_MS)
    assert page.get_attribute("#plan-result", "data-state") == "fresh", page.inner_text("#plan-status")
    return json.loads(page.get_attribute("#plan-result", "data-result"))


def wait_for_map(page) -> dict:
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state === 'done'",
                           timeout=RESULT_TIMEOUT_MS)
    return json.loads(page.get_attribute("#stability-chart", "data-axes"))


def px(axis: dict, value: float) -> float:
    return axis["px_min"] + (value - axis["min"]) / (axis["max"] - axis["min"]) * (axis["px_max"] - axis["px_min"])


def test_plan_is_the_command_lines_and_is_drawn_where_the_axes_put_it(page, server, tmp_path):
    rig = sine_rig()
    open_with(page, server, rig)
    # the link's spreads are in the box, one a line
    lines = page.input_value("#plan-spreads").splitlines()
    assert sorted(lines) == sorted(f"{k} {v}" for k, v in SPREADS.items())
    result = run_plan(page)
    assert page.is_hidden("#plan-cancel") and page.get_attribute("#plan-progress", "value") == "1"
    # Independent value: the command line's plan (CPython) of the rig as the page's core read
    # it; Pyodide and CPython may differ in the last bit of libm, so 1e-6 relative.
    sent = json.loads(page.get_attribute("#check-report", "data-rig"))
    assert sent["spreads"] == SPREADS
    assert_same_numbers(result, cli_plan(sent, tmp_path), rel=1e-6, abs_tol=1e-9)
    assert result["worst_margin_percent"] > 0
    # the sensitivity table: one row per spread, its cells the core's slopes
    rows = page.locator("table.plan-sensitivity tbody tr")
    assert rows.count() == len(SPREADS)
    for entry in result["sensitivity"]:
        for name, value in entry["inverted"].items():
            cell = page.locator(f'tr[data-path="{entry["path"]}"] td[data-edge="{name}"]')
            if value is None:
                assert cell.inner_text() == "no edge near"
            else:
                assert float(cell.get_attribute("data-value")) == value["per_unit"]
    # The overlay: the recommended point where the core's axis mapping puts it (to 0.01 px),
    # and one hatched rectangle per robust stable interval inside the map's speeds.
    axes = wait_for_map(page)
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.overlay === 'shown'")
    transform = page.get_attribute("#stability-chart .recommended-point", "transform")
    x, y = (float(v) for v in transform[len("translate("):-1].split())
    assert x == pytest.approx(px(axes["x"], result["speed_rpm"]), abs=0.01)
    assert y == pytest.approx(px(axes["y"], result["stroke_m"]), abs=0.01)
    d = page.get_attribute('#stability-chart path.robust-region[data-eq="inverted"]', "d")
    intervals = sum(1 for row in result["robust_region"]["rows"]
                    for a, b in row["inverted"]["stable_intervals_rpm"]
                    if min(b, axes["x"]["max"]) > max(a, axes["x"]["min"]))
    assert d.count("M") == intervals > 0
    ARTIFACTS.mkdir(exist_ok=True)
    page.locator("section.map").screenshot(path=str(ARTIFACTS / "plan-map.png"))


def test_the_recommended_point_becomes_the_operating_point_and_undo_takes_it_back(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    first = show_on(page, server, sine_rig())
    speed_before = page.input_value('[data-path="drive.speed_rpm"]')
    result = run_plan(page)
    old = page.get_attribute("#check-report", "data-result")
    page.click("#plan-use")
    moved = wait_for_result(page, old)
    # the sheet's point is the recommendation (typed to 7 significant figures)
    assert moved["speed_rpm"] == pytest.approx(result["speed_rpm"], rel=1e-6)
    assert moved["stroke_m"] == pytest.approx(result["stroke_m"], rel=1e-6)
    assert moved["inverted"]["stable"] is True
    # the plan stays (the limits are given, so moving the point does not change it)
    assert page.get_attribute("#plan-result", "data-state") == "fresh"
    shot(page, "plan-point-used")
    old = page.get_attribute("#check-report", "data-result")
    page.click("#undo")  # one step: speed and stroke together
    assert page.input_value('[data-path="drive.speed_rpm"]') == speed_before
    back = wait_for_result(page, old)
    assert back["speed_rpm"] == first["speed_rpm"] and back["stroke_m"] == first["stroke_m"]


def test_cancel_stops_the_plan_and_the_engine_answers_at_once(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    # the demo's crank drive with six spreads: a plan of tens of seconds in the page
    rig = ss.demo_rig_dict()
    rig["spreads"] = {**SPREADS, "links[0].point_masses[0].at_m": "+-1 mm",
                      "links[0].point_masses[0].mass_kg": "+-3%"}
    show_on(page, server, rig)
    page.click("#plan-go")
    page.wait_for_function("() => Number(document.getElementById('plan-progress').value) > 0.05",
                           timeout=RESULT_TIMEOUT_MS)
    assert page.is_visible("#plan-cancel")
    page.click("#plan-cancel")
    page.wait_for_function("() => document.getElementById('plan-result').dataset.state === 'cancelled'")
    assert "cancelled" in page.inner_text("#plan-status")
    assert page.is_hidden("#plan-cancel") and page.is_disabled("#plan-use")
    # the engine is free again: an edit is checked
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="drive.speed_rpm"]', "2750 rpm")
    assert wait_for_result(page, old, timeout=60_000)["speed_rpm"] == pytest.approx(2750.0)


def test_bad_spreads_are_named_in_the_panel_and_undone(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    show_on(page, server, sine_rig())
    page.fill("#plan-spreads", "links[0].length_m +-2%\nlinks[7].length_m +-2%\ndrive.stroke_m 3x..4x")
    wait_for_stale(page)
    msgs = page.locator("#plan-spreads-msgs li")
    paths = sorted(msgs.nth(i).get_attribute("data-path") for i in range(msgs.count()))
    assert paths == ["spreads.drive.stroke_m", "spreads.links[7].length_m"]
    assert page.get_attribute("#plan-spreads", "aria-invalid") == "true"
    page.click("#plan-go")  # refused with the fields named, nothing planned
    page.wait_for_function("() => document.getElementById('plan-result').dataset.state === 'failed'")
    assert "spreads" in page.inner_text("#plan-status")
    shot(page, "plan-bad-spreads")
    ARTIFACTS.mkdir(exist_ok=True)
    page.locator("section.plan").screenshot(path=str(ARTIFACTS / "plan-bad-spreads-panel.png"))
    page.locator("body").click(position={"x": 5, "y": 5})
    page.click("#undo")  # the spreads as they were: one step for the burst of typing
    # the same rig as at the start: its check comes back fresh (the verdict is unchanged)
    page.wait_for_function("() => document.getElementById('check-report').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    assert sorted(page.input_value("#plan-spreads").splitlines()) == sorted(
        f"{k} {v}" for k, v in SPREADS.items())
    assert page.locator("#plan-spreads-msgs li").count() == 0


def test_plan_panel_is_accessible_and_axe_finds_nothing(new_context, server):
    # as tests/browser/test_access.py measures targets: a tablet with touch
    page = new_context(viewport=TABLET_PORTRAIT, has_touch=True, is_mobile=True,
                       bypass_csp=True).new_page()
    open_with(page, server, sine_rig())
    run_plan(page)
    wait_for_map(page)
    # the page's own checks (WCAG 2.2 contrast, names, target size: tests/browser/test_access.py)
    assert failures(page) == []
    assert page.evaluate(UNNAMED) == []
    assert page.evaluate(SMALL_TARGETS, 44) == []  # at tablet width, as test_access.py
    # axe-core over the whole page with the plan shown, and the plan panel on its own
    assert axe_violations(page) == []
    assert axe_violations(page, "section.plan") == []
    # the audit can fail: an input without a name in the panel is its "label" rule
    page.evaluate("""() => document.querySelector('section.plan').append(
        Object.assign(document.createElement('input'), { id: 'axe-probe', type: 'text' }))""")
    assert "label" in [v["id"] for v in axe_violations(page, "section.plan")]
    page.evaluate("() => document.getElementById('axe-probe').remove()")
    shot(page, "plan-panel-full")
    page.locator("section.plan").screenshot(path=str(ARTIFACTS / "plan-panel-tablet.png"))
