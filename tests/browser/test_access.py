"""Accessibility of the page's main states: text contrast (WCAG 2.2 SC 1.4.3),
control borders (SC 1.4.11), names of controls (SC 4.1.2) and target size
(SC 2.5.8), measured in the rendered page."""

from __future__ import annotations

import pytest

from shakestill.model.safety import CAUTIONS

from pagekit import TOUCH_SIZES, open_page, shot, wait_for_result, wait_for_stale

pytestmark = pytest.mark.browser

# Every element with its own visible text: its colour, the background behind it
# (first opaque one up the tree, translucent ones blended over it), and its font.
COLLECT = """() => {
  const rgba = (c) => { const m = c.match(/[\\d.]+/g).map(Number); return [m[0], m[1], m[2], m.length > 3 ? m[3] : 1]; };
  const over = (top, under) => top.map((v, i) => i < 3 ? v * top[3] + under[i] * (1 - top[3]) : 1);
  function background(el) {
    const layers = [];
    for (let n = el; n; n = n.parentElement) {
      const c = rgba(getComputedStyle(n).backgroundColor);
      if (c[3] > 0) layers.push(c);
      if (c[3] >= 1) break;
    }
    let bg = [255, 255, 255, 1];
    for (const layer of layers.reverse()) bg = over(layer, bg);
    return bg;
  }
  const out = [];
  for (const el of document.querySelectorAll("body *")) {
    if (el.closest("svg, [hidden], .visually-hidden")) continue;
    const own = [...el.childNodes].some((n) => n.nodeType === 3 && n.textContent.trim());
    const box = el.getBoundingClientRect();
    if (!own || box.width === 0 || box.height === 0) continue;
    const s = getComputedStyle(el);
    if (s.visibility === "hidden" || Number(s.opacity) < 1) continue;
    out.push({ text: el.textContent.trim().slice(0, 40), fg: over(rgba(s.color), background(el)),
               bg: background(el), size: parseFloat(s.fontSize), weight: Number(s.fontWeight) });
  }
  for (const el of document.querySelectorAll("input[type=text], textarea, select")) {
    if (el.closest("[hidden]")) continue;
    const s = getComputedStyle(el);
    out.push({ text: "border of " + (el.id || el.name), fg: rgba(s.borderTopColor),
               bg: background(el.parentElement), size: 0, weight: 0, border: true });
  }
  return out;
}"""


def luminance(rgb) -> float:
    """Relative luminance, WCAG 2.2 definition (sRGB, threshold 0.04045)."""
    def channel(v):
        c = v / 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (channel(v) for v in rgb[:3])
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def contrast(a, b) -> float:
    """Contrast ratio (L1 + 0.05) / (L2 + 0.05), WCAG 2.2."""
    hi, lo = sorted((luminance(a), luminance(b)), reverse=True)
    return (hi + 0.05) / (lo + 0.05)


def required(item) -> float:
    """4.5:1 for text, 3:1 for large text (24 px, or 18.66 px bold) and control borders (WCAG 2.2)."""
    if item.get("border"):
        return 3.0
    large = item["size"] >= 24 or (item["size"] >= 18.66 and item["weight"] >= 700)
    return 3.0 if large else 4.5


def failures(page):
    return [(i["text"], round(contrast(i["fg"], i["bg"]), 2), required(i))
            for i in page.evaluate(COLLECT) if contrast(i["fg"], i["bg"]) < required(i)]


def test_wcag_contrast_holds_in_main_states(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    # Sanity of the formula against the WCAG extremes: black on white is 21:1.
    assert contrast([0, 0, 0], [255, 255, 255]) == pytest.approx(21.0, rel=1e-12)
    wait_for_result(page)
    assert failures(page) == []
    page.fill('[data-path="drive.stroke_m"]', "-4 mm")
    wait_for_stale(page)
    assert failures(page) == []
    page.click("#copy-link")  # a notice, in either outcome
    page.wait_for_selector("#notice:not([hidden])")
    assert failures(page) == []


UNNAMED = """() => [...document.querySelectorAll("input, select, textarea, button")].filter((el) => {
  if (el.closest("[hidden]")) return false;
  const named = (el.labels && el.labels.length && [...el.labels].some((l) => l.textContent.trim()))
    || el.getAttribute("aria-label") || el.getAttribute("aria-labelledby")
    || (el.tagName === "BUTTON" && el.textContent.trim());
  return !named;
}).map((el) => el.outerHTML.slice(0, 80))"""

# Each control's tap target: a check box or radio button is tapped through its label.
SMALL_TARGETS = """(least) => [...document.querySelectorAll("input, select, textarea, button, label.button, summary")]
  .filter((el) => !el.closest("[hidden], .visually-hidden") && !el.classList.contains("link-button")
          && !el.classList.contains("visually-hidden"))
  .map((el) => [el.id || el.textContent.trim().slice(0, 30),
                ((el.type === "checkbox" || el.type === "radio") && el.closest("label")
                 ? el.closest("label") : el).getBoundingClientRect()])
  .filter(([, r]) => r.width < least || r.height < least).map(([name]) => name)"""


def test_every_control_is_named_and_big_enough_on_a_tablet(booted):
    page = booted(**TOUCH_SIZES["tablet"])  # the worker's booted tablet page, reset (conftest)
    wait_for_result(page)
    page.click('button[data-action="add-mass"]')
    assert page.evaluate(UNNAMED) == []
    # Touch targets of at least 44 by 44 CSS px at tablet width (the figure; WCAG 2.2
    # SC 2.5.5's enhanced size; 2.5.8's minimum is 24): every control, a box by its label
    # (inline text links excepted, as both criteria do).
    assert page.evaluate(SMALL_TARGETS, 44) == []
    shot(page, "tablet-portrait-added-mass")


def test_print_shows_the_report_and_cautions_without_controls(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    wait_for_result(page)
    page.emulate_media(media="print")
    visible = """(sel) => [...document.querySelectorAll(sel)].filter((el) => {
        const r = el.getBoundingClientRect(); return r.width > 0 && r.height > 0; }).length"""
    assert page.evaluate(visible, "button, .toolbar, .verdict-strip, .coming") == 0
    # What the paper must carry: both verdict cards, the sketch and every caution of the core.
    assert page.evaluate(visible, ".eq-card") == 2
    assert page.evaluate(visible, "#schematic svg") == 1
    cautions = page.evaluate(visible, ".safety .cautions li")
    assert cautions == len(CAUTIONS)


def test_dark_mode_follows_the_system_and_keeps_contrast(new_context, server):
    # WCAG 2.2 SC 1.4.3 / 1.4.11 again, with the system set to dark (prefers-color-scheme)
    page = new_context(color_scheme="dark").new_page()
    open_page(page, server.url)
    background = page.evaluate("getComputedStyle(document.body).backgroundColor")
    assert luminance([float(v) for v in background[4:-1].split(",")[:3]]) < 0.05  # dark paper
    assert failures(page) == []
    page.fill('[data-path="drive.stroke_m"]', "-4 mm")
    wait_for_stale(page)
    assert failures(page) == []
    shot(page, "laptop-dark")


def test_print_says_when_for_which_rig_and_marks_an_unfinished_map(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    # The paper carries the date and the rig's title (filled in on the browser's beforeprint
    # event), and a map that was still being drawn says so in words, not only by its look.
    import datetime
    wait_for_result(page)
    title = page.locator('[data-path="title"]').input_value()
    page.evaluate("window.dispatchEvent(new Event('beforeprint'))")
    page.emulate_media(media="print")
    stamp = page.locator("#print-stamp")
    assert stamp.is_visible()
    assert title in stamp.inner_text() and str(datetime.date.today().year) in stamp.inner_text()
    page.evaluate("document.getElementById('stability-chart').dataset.state = 'running'")
    before = page.evaluate("getComputedStyle(document.getElementById('stability-chart'), "
                           "'::before').content")
    assert "Map incomplete" in before
    page.emulate_media(media="screen")
    assert not stamp.is_visible()
