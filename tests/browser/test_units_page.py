"""Display units on the page: metric or imperial, followed by the verdict, the map's stroke
axis and the numbers the page writes into the sheet; kept in the browser and carried by a
share link. Every imperial number is checked against an independent conversion of the
core's SI result: 1 in = 25.4 mm, 1 ft = 0.3048 m, 1 lb = 0.45359237 kg, all exact by
definition (NIST SP 811, appendix B)."""

from __future__ import annotations

import json
import math
import re

import pytest

from pagekit import LAPTOP, TABLET_PORTRAIT, open_page, shot, wait_for_result, wait_for_rig

pytestmark = pytest.mark.browser

INCH = 0.0254
FOOT = 0.3048
POUND = 0.45359237
PHONE = {"width": 390, "height": 844}
SIZES = {
    "desktop": {"viewport": LAPTOP},
    "tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
    "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True},
}


def shown(text: str, unit: str) -> float:
    """The number written just before ``unit`` in a line of the page."""
    match = re.search(r"(-?[\d.]+(?:e-?\d+)?) " + re.escape(unit), text)
    assert match, f"no number in {unit} in {text!r}"
    return float(match.group(1))


def four_figures(got: float, want: float) -> None:
    # The report writes 4 significant figures: off by at most half a unit in the 4th.
    assert abs(got - want) <= 0.5 * 10 ** (math.floor(math.log10(abs(want))) - 3) * 1.000001


def choose(page, units: str) -> None:
    page.check(f'input[name="units"][value="{units}"]')


def map_axes(page, unit: str) -> dict:
    page.wait_for_function("""(unit) => {
        const el = document.getElementById("stability-chart");
        return el.dataset.axes && JSON.parse(el.dataset.axes).y.shown_unit === unit;
    }""", arg=unit, timeout=120_000)
    return json.loads(page.get_attribute("#stability-chart", "data-axes"))


@pytest.mark.parametrize("size", SIZES)
def test_imperial_verdict_and_map_follow_the_choice_and_it_is_kept(new_context, server, size):
    page = new_context(**SIZES[size]).new_page()
    result = open_page(page, server.url)
    metric = page.inner_text("#check-report .operating")
    four_figures(shown(metric, "mm"), result["stroke_m"] * 1000)
    choose(page, "imperial")
    line = page.inner_text("#check-report .operating")
    four_figures(shown(line, "in"), result["stroke_m"] / INCH)
    four_figures(shown(line, "ft/s²"), result["peak_accel_m_s2"] / FOOT)
    assert " mm" not in line and "m/s²" not in line.replace("ft/s²", "")
    inv = result["inverted"]
    if inv.get("stable") and isinstance(inv.get("stroke_window_m"), list):
        card = page.inner_text('.eq-card[data-eq="inverted"]')
        low = inv["stroke_window_m"][0] / INCH
        four_figures(shown(card.split("Stroke window")[1], "in"), low)
    axes = map_axes(page, "in")
    assert axes["y"]["unit"] == "m"  # the mapping stays SI
    assert "stroke (in)" in page.inner_html("#stability-chart")
    assert page.evaluate("() => document.documentElement.scrollWidth <= window.innerWidth")
    page.locator("#check-report").scroll_into_view_if_needed()
    shot(page, f"units-imperial-{size}-verdict", full_page=False)
    page.locator("#stability-chart").scroll_into_view_if_needed()
    shot(page, f"units-imperial-{size}-map", full_page=False)
    page.reload()
    wait_for_result(page, timeout=120_000)
    assert page.is_checked('input[name="units"][value="imperial"]')
    four_figures(shown(page.inner_text("#check-report .operating"), "in"), result["stroke_m"] / INCH)


def test_a_link_carries_the_units_and_a_file_is_written_in_them(new_context, server, tmp_path):
    page = new_context().new_page()
    open_page(page, server.url)
    choose(page, "imperial")
    # A rig file in SI whose numbers are whole inches and pounds (2 in = 0.0508 m,
    # 1 lb = 0.45359237 kg): the sheet writes them in those units, exactly.
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    rig["title"] = "Inch rig"
    rig["links"][0]["length_m"] = 6 * INCH
    rig["links"][0]["point_masses"] = [{"mass_kg": POUND, "at_m": 6 * INCH}]
    rig["drive"]["stroke_m"] = 0.0508
    path = tmp_path / "inch.json"
    path.write_text(json.dumps(rig))
    page.set_input_files("#open-file", str(path))
    result = wait_for_rig(page, "Inch rig")
    assert page.input_value('[data-path="drive.stroke_m"]') == "2 in"
    assert page.input_value('[data-path="links[0].point_masses[0].mass_kg"]') == "1 lb"
    assert result["stroke_m"] == 0.0508  # the core read back exactly the file's number
    page.click("#copy-link")
    page.wait_for_function("() => document.getElementById('share-box').value.includes('#')")
    link = page.input_value("#share-box")
    other = new_context().new_page()  # its own storage: metric until the link says otherwise
    other.goto(server.url)
    wait_for_result(other, timeout=120_000)
    other.goto(link)
    wait_for_rig(other, "Inch rig")
    assert other.is_checked('input[name="units"][value="imperial"]')
    assert other.input_value('[data-path="drive.stroke_m"]') == "2 in"
    four_figures(shown(other.inner_text("#check-report .operating"), "in"), 2.0)
    other.locator("#rig-sheet").scroll_into_view_if_needed()
    shot(other, "units-link-imperial", full_page=False)
