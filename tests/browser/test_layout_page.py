"""The page's layout at desktop, tablet (touch) and phone sizes: the rig sheet in reach while
working further down (sticky column on a wide screen, a drawer from a tab on a narrow one),
no sideways scroll at 390 px, no overlapping words at 200% text, disabled buttons that look
disabled, and the map's text alternative checked against the core's own chart on CPython."""

from __future__ import annotations

import json
import math
import re

import pytest

from shakestill.equilibria.chart import chart, chart_dict
from shakestill.model.rigread import rig_from_dict

from pagekit import LAPTOP, TABLET_PORTRAIT, open_page, shot, wait_for_result

pytestmark = pytest.mark.browser

PHONE = {"width": 390, "height": 844}
NARROW = {
    "tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
    "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True},
}

IN_VIEW = """(sel) => {
  const r = document.querySelector(sel).getBoundingClientRect();
  return Math.min(r.bottom, innerHeight) - Math.max(r.top, 0);
}"""

# Pairs of elements with their own words whose boxes cross (neither inside the other).
OVERLAPS = """(root) => {
  const boxes = [];
  for (const el of document.querySelectorAll(root + " *")) {
    if (el.closest("svg, [hidden], .visually-hidden, details:not([open]) > :not(summary)")) continue;
    const own = [...el.childNodes].some((n) => n.nodeType === 3 && n.textContent.trim());
    const r = el.getBoundingClientRect();
    if (own && r.width > 0 && r.height > 0) boxes.push([el, r]);
  }
  const out = [];
  for (let i = 0; i < boxes.length; i++) {
    for (let j = i + 1; j < boxes.length; j++) {
      const [a, ra] = boxes[i], [b, rb] = boxes[j];
      if (a.contains(b) || b.contains(a)) continue;
      const w = Math.min(ra.right, rb.right) - Math.max(ra.left, rb.left);
      const h = Math.min(ra.bottom, rb.bottom) - Math.max(ra.top, rb.top);
      if (w > 2 && h > 2) out.push([a.textContent.trim().slice(0, 30), b.textContent.trim().slice(0, 30)]);
    }
  }
  return out;
}"""


def test_the_sheet_stays_in_view_beside_the_map_and_the_fit_on_a_desktop(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    wait_for_result(page)
    for target in ("#stability-chart", "section.fit"):
        page.locator(target).scroll_into_view_if_needed()
        page.evaluate("(sel) => document.querySelector(sel).scrollIntoView({block: 'start'})", target)
        assert page.evaluate(IN_VIEW, ".panel.sheet") >= 400, f"sheet out of reach at {target}"
    assert not page.is_visible("#sheet-tab")
    shot(page, "layout-desktop-fit-with-sheet", full_page=False)


@pytest.mark.parametrize("size", NARROW)
def test_the_sheet_opens_as_a_drawer_over_the_map_and_closes_back_to_it(booted, server, size):
    page = booted(**NARROW[size])  # a booted page at this size, reset (conftest.BootedPages)
    old = json.dumps(wait_for_result(page))
    page.evaluate("() => document.getElementById('stability-chart').scrollIntoView({block: 'start'})")
    top = "() => document.getElementById('stability-chart').getBoundingClientRect().top"
    before = page.evaluate(top)
    page.tap("#sheet-tab")
    box = page.evaluate("""() => { const r = document.querySelector('.panel.sheet').getBoundingClientRect();
        return [r.left, r.top, r.right, r.bottom]; }""")
    width = NARROW[size]["viewport"]["width"]
    assert box[0] >= 0 and box[1] >= 0 and box[2] <= width + 0.5
    assert page.evaluate("() => document.activeElement.id") == "rig-sheet-h"
    page.fill('[data-path="drive.speed_rpm"]', "2400 rpm")
    result = wait_for_result(page, old)
    assert math.isclose(result["speed_rpm"], 2400, rel_tol=1e-12)
    shot(page, f"layout-{size}-drawer-open", full_page=False)
    page.tap("#sheet-close")
    # The map is where it was (the browser's scroll anchoring keeps it there even though
    # the verdict above it has changed its height).
    assert abs(page.evaluate(top) - before) <= 2
    assert page.evaluate(IN_VIEW, "#stability-chart") > 100
    assert page.evaluate("() => document.activeElement.id") == "sheet-tab"
    assert page.evaluate("() => document.documentElement.scrollWidth <= innerWidth")
    shot(page, f"layout-{size}-drawer-closed", full_page=False)


def test_no_sideways_scroll_at_390_px_with_the_map_and_its_table_open(booted, server):
    page = booted(**NARROW["phone"])  # a booted page at this size, reset (conftest.BootedPages)
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state === 'done'",
                           timeout=180_000)
    page.click("#map-table summary")
    assert page.evaluate("() => document.documentElement.scrollWidth <= innerWidth")
    page.locator("#map-table").scroll_into_view_if_needed()
    shot(page, "layout-phone-map-table", full_page=False)


@pytest.mark.parametrize("viewport", [LAPTOP, TABLET_PORTRAIT], ids=["desktop", "tablet"])
def test_no_words_overlap_at_200_percent_text(new_context, server, viewport):
    page = new_context(viewport=viewport).new_page()
    open_page(page, server.url)
    # Text at 200% as a browser's text-size setting gives it (the page's CSP refuses a <style>).
    page.evaluate("() => { document.documentElement.style.fontSize = '200%'; }")
    for root in (".toolbar", ".verdict-strip", ".panel.sheet", "#check-report", ".map-tools"):
        assert page.evaluate(OVERLAPS, root) == [], root
    assert page.evaluate("() => document.documentElement.scrollWidth <= innerWidth")
    shot(page, f"layout-200-percent-{viewport['width']}", full_page=False)


def test_disabled_buttons_look_disabled(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    wait_for_result(page)
    style = "(sel) => { const s = getComputedStyle(document.querySelector(sel)); " \
            "return [s.cursor, s.borderStyle, s.backgroundColor, s.color]; }"
    assert page.is_disabled("#undo") and page.is_enabled("#load-demo")
    off, on = page.evaluate(style, "#undo"), page.evaluate(style, "#load-demo")
    assert off[0] == "not-allowed" and off[1] == "dashed" and on[1] == "solid"
    assert off[2] != on[2] and off[3] != on[3]


def test_the_map_table_gives_the_core_s_stable_speeds_row_by_row(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    wait_for_result(page)
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state === 'done'",
                           timeout=180_000)
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    # The same core on CPython, outside the browser: the rows the page's table must show.
    want = chart_dict(chart(rig_from_dict(rig)))
    by_y = {row["y"]: row for row in want["rows"]}
    assert int(page.get_attribute("#stability-chart", "data-rows")) == len(want["rows"])
    page.click("#map-table summary")
    rows = page.query_selector_all("#map-table tbody tr")
    assert 2 <= len(rows) <= 8
    for tr in rows:
        y = float(tr.get_attribute("data-y"))
        ref = by_y[min(by_y, key=lambda v: abs(v - y))]
        assert math.isclose(ref["y"], y, rel_tol=1e-9, abs_tol=1e-15)
        assert float(re.match(r"[\d.]+", tr.query_selector("th").inner_text()).group()) == \
            pytest.approx(y * 1000, rel=5e-3, abs=5e-4)  # shown in mm to 3 figures
        for eq in ("inverted", "hanging"):
            text = tr.query_selector(f'td[data-eq="{eq}"]').inner_text()
            intervals = ref[eq]["stable_intervals_rpm"]
            if not intervals:
                assert text == "nowhere on this row"
                continue
            got = [float(v) for v in re.findall(r"([\d.]+) (?:to|rpm)", text)]
            flat = [v for pair in intervals for v in pair]
            assert len(got) == len(flat)
            for g, w in zip(got, flat):
                assert g == pytest.approx(w, rel=5e-4)  # 4 significant figures
