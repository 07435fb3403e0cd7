"""A verdict at once: the demo rig's check worked out at build time, the last visit's check
for the same rig, each marked as such (data-state "cached", data-source "build" or
"last-visit") until the engine's own result replaces it; a rig that differs in any number
never shows another rig's result."""

from __future__ import annotations

import json

import pytest
import shakestill as ss  # the core on CPython: the independent reading

from pagekit import SITE, TOUCH_SIZES, open_sheet, shot, wait_for_result

pytestmark = pytest.mark.browser

CACHED = "() => document.getElementById('check-report').dataset.state === 'cached'"


@pytest.mark.parametrize("where", ["served", "single file"])
def test_a_first_visit_shows_the_build_time_verdict_then_the_engines(new_context, request, where):
    # The single file holds the build-time verdict in its prelude and runs the page's module
    # before the parser reaches its archive (build_scripts/offline.py).
    url = request.getfixturevalue("server").url if where == "served" \
        else request.getfixturevalue("offline_file").as_uri()
    page = new_context().new_page()
    page.goto(url)
    page.wait_for_function(CACHED, timeout=30_000)
    assert page.get_attribute("#check-report", "data-source") == "build"
    cached = json.loads(page.get_attribute("#check-report", "data-result"))
    built = json.loads((SITE / "demo-check.json").read_text())
    assert cached == built["reply"]["result"]
    # the same numbers as the core on CPython now (the build used the same core)
    assert cached["inverted"]["speed_window_rpm"] == pytest.approx(
        ss.check(ss.demo_rig())["inverted"]["speed_window_rpm"], rel=1e-12)
    assert "built" in page.inner_text("#check-report .report-status")
    shot(page, f"laptop-first-verdict-cached-{where.replace(' ', '-')}")
    fresh = wait_for_result(page)
    assert page.get_attribute("#check-report", "data-source") is None
    for eq in ("inverted", "hanging"):
        assert fresh[eq]["stable"] == cached[eq]["stable"]
        assert fresh[eq]["max_multiplier"] == pytest.approx(cached[eq]["max_multiplier"], rel=1e-9)


@pytest.mark.parametrize("size", ["desktop", "tablet", "phone"])
def test_a_return_visit_shows_the_last_check_of_the_same_rig_only(new_context, server, size):
    context = new_context(**TOUCH_SIZES.get(size, {}))  # desktop: the laptop viewport
    page = context.new_page()
    page.goto(server.url)
    old = json.dumps(wait_for_result(page))
    open_sheet(page)
    page.fill('[data-path="drive.speed_rpm"]', "2650 rpm")
    mine = wait_for_result(page, old)

    again = context.new_page()
    again.goto(server.url)
    again.wait_for_function(CACHED, timeout=30_000)
    assert again.get_attribute("#check-report", "data-source") == "last-visit"
    assert json.loads(again.get_attribute("#check-report", "data-result")) == mine
    again.close()

    # the saved rig differs from the last check's in one number: no cached verdict
    page.evaluate("""() => {
        const saved = JSON.parse(localStorage.getItem("shakestill.autosave.v1"));
        saved.draft.drive.speed_rpm = "2651 rpm";
        localStorage.setItem("shakestill.autosave.v1", JSON.stringify(saved));
    }""")
    third = context.new_page()
    third.add_init_script("""
        window.__states = [];
        new MutationObserver(() => {
            const el = document.getElementById("check-report");
            if (el && el.dataset.state) window.__states.push(el.dataset.state);
        }).observe(document, {attributes: true, subtree: true, attributeFilter: ["data-state"]});""")
    third.goto(server.url)
    result = wait_for_result(third)
    assert result["speed_rpm"] == 2651.0
    states = third.evaluate("() => window.__states")
    assert "fresh" in states and "cached" not in states
