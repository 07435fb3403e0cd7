"""Words on the page: one vocabulary with the command line's report, explanations of terms
on hover and on keyboard focus, the map's legend, jargon behind "How this was computed";
and the axe-core audit at zero violations in the states this work touches (dark mode,
phone with the sheet's drawer open, the map with its table, imperial units, the lean
chart and the plan shown)."""

from __future__ import annotations

import pytest
import shakestill as ss
from shakestill.model import share

from pagekit import (LAPTOP, TABLET_PORTRAIT, axe_violations, cli_check, open_page, shot,
                     wait_for_result)

pytestmark = pytest.mark.browser

PHONE = {"width": 390, "height": 844}
MAP_DONE = "() => document.getElementById('stability-chart').dataset.state === 'done'"


def test_verdict_words_are_the_command_lines(demo_page, server, tmp_path):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    result = wait_for_result(page)
    import json
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    cli = cli_check(rig, tmp_path)  # the command line's JSON, for which verdict it gives
    page.click(".report-text summary")
    text = page.inner_text(".report-text pre").lower()  # the core's report, as the CLI prints it
    for eq in ("inverted", "hanging"):
        assert cli[eq]["stable"] == result[eq]["stable"]
        word = page.inner_text(f'.eq-card[data-eq="{eq}"] .verdict-word').lower()
        assert word in text, f"the page says {word!r}, the report does not"
        strip = page.inner_text(f'#verdict-strip [data-eq="{eq}"] .strip-word').lower()
        assert strip == word


def test_each_term_explains_itself_on_hover_and_on_keyboard_focus(new_context, server):
    page = new_context(**{"viewport": TABLET_PORTRAIT}).new_page()
    open_page(page, server.url)
    terms = page.locator("main .term")
    assert terms.count() >= 5  # Floquet multiplier x2, slow sway, tongue, acceleration lines, knock...
    for i in range(terms.count()):
        t = terms.nth(i)
        if not t.is_visible():
            continue
        tip_id = t.get_attribute("aria-describedby")
        tip = page.locator(f"#{tip_id}")
        assert tip.get_attribute("role") == "tooltip" and len(tip.inner_text() or tip.text_content()) > 20
        assert not tip.is_visible()
        t.focus()
        assert tip.is_visible(), t.text_content()
        page.keyboard.press("Escape")  # dismissible without moving focus (WCAG 1.4.13)
        assert not tip.is_visible()
        page.evaluate("() => document.activeElement.blur()")
        page.mouse.move(0, 0)
        t.hover()
        assert tip.is_visible()
    legend = page.inner_text(".map-legend")
    assert "n = 1 is the principal parametric resonance" in legend and "acceleration" in legend
    first = page.locator("main .term").first
    first.focus()
    shot(page, "words-term-on-focus", full_page=False)


def test_map_notes_sit_behind_how_this_was_computed(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    wait_for_result(page)
    page.wait_for_function(MAP_DONE, timeout=180_000)
    note = page.locator("#chart-note")
    assert note.text_content().startswith("How the map is made")
    assert not note.is_visible()
    page.click(".map details.how summary")
    assert note.is_visible()


def _clean(page, where: str) -> None:
    found = axe_violations(page)
    assert found == [], f"{where}: {found}"


def test_axe_finds_nothing_in_dark_mode_with_the_map_and_its_table(new_context, server):
    page = new_context(viewport=LAPTOP, color_scheme="dark", bypass_csp=True).new_page()
    open_page(page, server.url)
    page.wait_for_function(MAP_DONE, timeout=180_000)
    page.click("#map-table summary")
    page.locator("main .term").first.focus()
    _clean(page, "dark, map and table")
    page.locator("#stability-chart").scroll_into_view_if_needed()
    shot(page, "words-dark-map", full_page=False)


def test_axe_finds_nothing_on_a_phone_with_the_drawer_open_in_imperial(new_context, server):
    page = new_context(viewport=PHONE, has_touch=True, is_mobile=True, bypass_csp=True).new_page()
    open_page(page, server.url)
    page.check('input[name="units"][value="imperial"]')
    page.wait_for_function(MAP_DONE, timeout=180_000)
    _clean(page, "phone, imperial")
    page.tap("#sheet-tab")
    _clean(page, "phone, drawer open")
    # the audit can fail: a field without a name in the drawer is its "label" rule
    page.evaluate("""() => document.getElementById('rig-sheet').append(
        Object.assign(document.createElement('input'), { type: 'text' }))""")
    assert "label" in [v["id"] for v in axe_violations(page)]


def test_axe_finds_nothing_with_the_lean_chart_and_the_plan_shown(new_context, server):
    page = new_context(viewport=TABLET_PORTRAIT, has_touch=True, is_mobile=True,
                       bypass_csp=True).new_page()
    data = ss.demo_rig_dict()
    data["title"] = "Words test rig"
    data["drive"] = {"waveform": "sine", "stroke_m": 0.024, "speed_rpm": 2700, "axis_tilt_deg": 1}
    data["spreads"] = {"links[0].length_m": "+-2%"}
    open_page(page, f"{server.url}#{share.encode(data)}")
    page.tap("#lean-go")
    page.wait_for_function("() => document.getElementById('lean-chart').dataset.state === 'fresh'",
                           timeout=180_000)
    page.tap("#plan-go")
    page.wait_for_function("() => ['fresh', 'failed'].includes("
                           "document.getElementById('plan-result').dataset.state)", timeout=180_000)
    _clean(page, "lean chart and plan shown")


def test_strongly_mixed_modes_are_said_beside_the_estimates(demo_page, tmp_path):
    # A three-link rig with a heavy damper on its short last link: the damper mixing of the
    # command line's check (CPython, the independent value; its figure is checked against
    # scipy eigh in tests/test_modal_charts.py) above 0.5, said beside the estimates with
    # its two digits; the demo rig (one link) has no such line.
    from pagekit import wait_for_rig
    page = demo_page
    wait_for_result(page)
    assert page.locator("[data-key=strong-mixing]").count() == 0
    data = ss.demo_rig_dict()
    data["title"] = "Damped triple"
    data["links"] = [
        {"length_m": 0.12, "rod_mass_kg": 0.034,
         "point_masses": [{"mass_kg": 0.019, "at_m": 0.12}]},
        {"length_m": 0.11, "rod_mass_kg": 0.026,
         "point_masses": [{"mass_kg": 0.026, "at_m": 0.11}], "joint_damping_N_m_s": 1.7e-4},
        {"length_m": 0.055, "rod_mass_kg": 0.027,
         "point_masses": [{"mass_kg": 0.023, "at_m": 0.055}], "joint_damping_N_m_s": 1.5e-3}]
    want = cli_check(data, tmp_path)["modes"]["damper_mixing"]
    assert want > 0.5
    page.evaluate("(f) => { location.hash = f; }", share.encode(data))
    wait_for_rig(page, "Damped triple")
    words = page.inner_text("[data-key=strong-mixing]")
    assert f"mix the sway modes strongly (by {float(f'{want:.2g}'):g})" in words, words
    assert page.context.recorder.errors == []
