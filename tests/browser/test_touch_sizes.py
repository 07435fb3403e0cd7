"""The first verdict and undo on a tablet held upright (touch) and on a phone.

A cold visit shows the demo rig's verdict worked out at build time at once, marked
data-state "cached" / data-source "build", then the engine's own result (the core on CPython
is the independent reading, as in test_first_verdict.py at desktop size). An edit undone by
tapping Undo gives back the field as typed and the same check, to the bit (the check of the
same rig by the core on CPython, 1e-9 relative). Each size needs a cold page of its own: the
cached verdict exists only before the engine has started.
"""

from __future__ import annotations

import json

import pytest
import shakestill as ss

from pagekit import (SITE, TABLET_PORTRAIT, assert_map_csv_is_the_cli_chart, assert_same_numbers,
                     assert_single_file_shares_by_fragment, shot, wait_for_result)

pytestmark = pytest.mark.browser

PHONE = {"width": 390, "height": 844}
SIZES = {"tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True},
         "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True}}
CACHED = "() => document.getElementById('check-report').dataset.state === 'cached'"


@pytest.mark.parametrize("size", sorted(SIZES))
def test_cached_then_fresh_verdict_and_undo_by_touch(new_context, server, size):
    page = new_context(**SIZES[size]).new_page()
    errors = []
    page.on("pageerror", lambda err: errors.append(str(err)))
    page.goto(server.url)
    page.wait_for_function(CACHED, timeout=30_000)
    assert page.get_attribute("#check-report", "data-source") == "build"
    cached = json.loads(page.get_attribute("#check-report", "data-result"))
    assert cached == json.loads((SITE / "demo-check.json").read_text())["reply"]["result"]
    shot(page, f"{size}-first-verdict-cached")
    fresh = wait_for_result(page)
    assert page.get_attribute("#check-report", "data-source") is None
    want = json.loads(json.dumps(ss.check(ss.demo_rig())))  # the core on CPython
    assert_same_numbers(fresh, want, rel=1e-9, where=f"{size} fresh check")

    field = page.locator('[data-path="drive.speed_rpm"]')
    typed = field.input_value()
    raw = lambda: page.get_attribute("#check-report", "data-result")  # noqa: E731
    before = raw()
    field.fill("2500 rpm")
    edited = wait_for_result(page, before)
    assert edited["speed_rpm"] == 2500.0
    before = raw()
    page.locator("#undo").tap()
    back = wait_for_result(page, before)
    assert field.input_value() == typed
    assert_same_numbers(back, want, rel=1e-9, where=f"{size} after undo")
    before = raw()
    page.locator("#redo").tap()
    again = wait_for_result(page, before)
    assert again["speed_rpm"] == 2500.0 and field.input_value() == "2500 rpm"
    assert errors == []


def test_on_a_phone_terms_explain_themselves_on_tap_and_the_map_saves(new_context, server,
                                                                      tmp_path):
    # A tap on a term focuses it and shows its one-line explanation (no hover on touch); the
    # map's CSV saved by a tap holds every row's stable intervals of `shakestill chart --json`
    # for the same rig (the command line on CPython, 1e-9 relative), its PNG is a true PNG
    # (signature, ISO/IEC 15948).
    page = new_context(**SIZES["phone"]).new_page()  # (the fixture accepts downloads)
    page.goto(server.url)
    wait_for_result(page)
    terms = page.locator("main .term")
    tapped = 0
    for i in range(terms.count()):
        t = terms.nth(i)
        if not t.is_visible():
            continue
        tip = page.locator(f"#{t.get_attribute('aria-describedby')}")
        t.tap()
        assert tip.is_visible(), t.text_content()
        assert len(tip.text_content()) > 20
        tapped += 1
    assert tapped >= 3
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state "
                           "=== 'done'", timeout=180_000)
    with page.expect_download() as got:
        page.locator("#chart-save-png").tap()
    assert open(got.value.path(), "rb").read()[:8] == b"\x89PNG\r\n\x1a\n"
    with page.expect_download() as got:
        page.locator("#chart-save-csv").tap()
    assert_map_csv_is_the_cli_chart(page, got.value.path(), tmp_path)


# Every frame from the first paint: where the map's legend sits below the map panel's heading,
# with the map's state then (a rAF loop started before the page's own scripts).
LEGEND_WATCH = """
window.__legendTops = [];
const look = () => {
  const head = document.getElementById("map-h"), legend = document.querySelector(".map-legend");
  const chart = document.getElementById("stability-chart");
  if (head && legend && chart) {
    const top = Math.round(legend.getBoundingClientRect().top - head.getBoundingClientRect().top);
    const last = window.__legendTops[window.__legendTops.length - 1];
    if (!last || last[0] !== top || last[1] !== chart.dataset.state) {
      window.__legendTops.push([top, chart.dataset.state]);
    }
  }
  requestAnimationFrame(look);
};
requestAnimationFrame(look);
"""


@pytest.mark.parametrize("size", sorted(SIZES))
def test_the_page_below_the_map_holds_still_while_the_map_is_drawn(new_context, server, size):
    # A term under the map is tapped while the map is drawn: if the map's box or its status
    # line changes height on the way (empty, drawing, done, drawn again), the words move
    # under the finger and the tap lands elsewhere. Layout shift as in the Core Web Vitals'
    # Cumulative Layout Shift (web.dev, "Cumulative Layout Shift"): none is the target here,
    # to the pixel.
    context = new_context(**SIZES[size])
    context.add_init_script(LEGEND_WATCH)
    page = context.new_page()
    page.goto(server.url)
    wait_for_result(page)
    done = "() => document.getElementById('stability-chart').dataset.state === 'done'"
    page.wait_for_function(done, timeout=180_000)
    page.locator("#chart-redraw").tap()
    page.wait_for_function(done, timeout=180_000)
    seen = page.evaluate("window.__legendTops")
    states = {state for _, state in seen}
    assert {"empty", "running", "done"} <= states, seen
    assert len({top for top, _ in seen}) == 1, seen


@pytest.mark.parametrize("size", sorted(SIZES))
def test_the_single_file_shares_by_fragment_on_a_tablet_and_a_phone(new_context, offline_file,
                                                                   size):
    # Opened from disk, a link to the file would open only on this device: the page gives the
    # fragment and says where it opens, with the rig file one tap away (as at desktop size in
    # test_offline.py). The fragment decodes to the sheet's rig (the core's share.decode).
    page = new_context(**SIZES[size]).new_page()
    page.goto(offline_file.as_uri())
    wait_for_result(page)
    assert_single_file_shares_by_fragment(page, tap=True)
