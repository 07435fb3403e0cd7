"""The rig sheet in the display units: numbers that came as SI (the demo, a file, a link) are
written in the units chosen and written again on a switch, a text the user typed keeps its
unit, and a switch moves no rig (the check's JSON is the same to the bit). Each imperial
number is checked against an independent conversion of the core's SI rig with the exact
definitions of NIST SP 811, appendix B: 1 in = 0.0254 m, 1 ft = 0.3048 m,
1 lb = 0.45359237 kg, 1 lbf = 4.4482216152605 N."""

from __future__ import annotations

import json
import re

import pytest

from pagekit import LAPTOP, TABLET_PORTRAIT, open_page, shot, wait_for_result

pytestmark = pytest.mark.browser

INCH = 0.0254
FOOT = 0.3048
POUND = 0.45359237
POUND_FORCE = 4.4482216152605
# Imperial unit -> SI per unit (NIST SP 811, appendix B; exact by definition).
IMPERIAL = {"in": INCH, "oz": POUND / 16, "lb": POUND, "lb in2": POUND * INCH ** 2,
            "lbf in s": POUND_FORCE * INCH, "lbf in": POUND_FORCE * INCH, "ft/s2": FOOT}
METRIC_UNIT = re.compile(r"\d (mm|m|g|kg|kg m2|N m s|N m|m/s2)$")
SIZES = {
    "desktop": {"viewport": LAPTOP},
    "tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
    "phone": {"viewport": {"width": 390, "height": 844}, "has_touch": True, "is_mobile": True},
}


def sheet(page) -> dict[str, str]:
    """Every text field of the sheet by its JSON path."""
    return page.evaluate("""() => Object.fromEntries([...document.querySelectorAll(
        '#rig-sheet input[data-path]:not([type="radio"])')].map((el) => [el.dataset.path, el.value]))""")


def si_at(rig: dict, path: str):
    node = rig
    for name, index in re.findall(r"([^.[\]]+)|\[(\d+)\]", path):
        node = node[int(index)] if index else node.get(name) if isinstance(node, dict) else None
        if node is None:
            return None
    return node


def choose(page, units: str) -> None:
    if page.is_visible("#sheet-close"):
        page.click("#sheet-close")
    page.check(f'input[name="units"][value="{units}"]')


def wait_for_words_in(page, unit: str) -> None:
    """A fresh check whose command-line words are written in ``unit``."""
    page.wait_for_function("""(unit) => {
        const el = document.getElementById("check-report");
        const pre = el.querySelector("pre");
        return el.dataset.state === "fresh" && pre && new RegExp("\\\\d " + unit + "\\\\b").test(pre.textContent);
    }""", arg=unit, timeout=120_000)


def type_into(page, path: str, text: str) -> None:
    if page.is_visible("#sheet-tab"):
        page.click("#sheet-tab")
    page.fill(f'[data-path="{path}"]', text)
    if page.is_visible("#sheet-close"):
        page.click("#sheet-close")


@pytest.mark.parametrize("size", SIZES)
def test_the_sheet_follows_the_units_and_a_switch_moves_no_rig(new_context, server, size):
    page = new_context(**SIZES[size]).new_page()
    open_page(page, server.url)
    result = page.get_attribute("#check-report", "data-result")
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    metric = sheet(page)
    assert metric["drive.stroke_m"].endswith(" mm")  # the demo, written as a technician says it

    choose(page, "imperial")
    page.wait_for_function("""() => document.querySelector('[data-path="drive.stroke_m"]')
        .value.endsWith(" in")""")
    wait_for_words_in(page, "in")
    imperial = sheet(page)
    checked = 0
    for path, text in imperial.items():
        assert not METRIC_UNIT.search(text), f"{path}: {text!r} left in a metric unit"
        match = re.fullmatch(r"(-?[\d.]+(?:e-?\d+)?) (in|oz|lb|lb in2|lbf in s|lbf in|ft/s2)", text)
        want = si_at(rig, path)
        if not match or not isinstance(want, (int, float)):
            continue
        got = float(match.group(1)) * IMPERIAL[match.group(2)]
        # written to at least 4 significant figures: within half a unit of the 4th
        assert got == pytest.approx(want, rel=5e-4, abs=1e-15), (path, text, want)
        checked += 1
    assert checked >= 5, imperial
    # The display switch moved no rig: the core read the very same doubles.
    assert page.get_attribute("#check-report", "data-result") == result
    assert json.loads(page.get_attribute("#check-report", "data-rig")) == rig
    shot(page, f"sheet-units-imperial-{size}", full_page=False)

    # A text the user types keeps its unit: 0.75 in is 19.05 mm exactly (NIST SP 811).
    type_into(page, "drive.stroke_m", "0.75 in")
    typed = wait_for_result(page, previous=result)
    assert typed["stroke_m"] == pytest.approx(0.01905, rel=1e-15)
    after_typing = page.get_attribute("#check-report", "data-result")

    choose(page, "metric")
    page.wait_for_function("""() => document.querySelector('[data-path="links[0].length_m"]')
        .value.match(/ (mm|m)$/)""")
    wait_for_words_in(page, "mm")
    back = sheet(page)
    assert back["drive.stroke_m"] == "0.75 in"
    assert {k: v for k, v in back.items() if k != "drive.stroke_m"} == \
        {k: v for k, v in metric.items() if k != "drive.stroke_m"}
    assert page.get_attribute("#check-report", "data-result") == after_typing
    assert page.evaluate("() => document.documentElement.scrollWidth <= window.innerWidth")
    page.reload()  # the autosave keeps the typed text and the SI numbers beside the others
    wait_for_result(page, timeout=120_000)
    assert sheet(page) == back
    assert page.get_attribute("#check-report", "data-result") == after_typing
