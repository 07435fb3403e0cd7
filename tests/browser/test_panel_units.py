"""The work panels follow the display units (issue 16, "Units and words"): loads, run-up,
plan and fit write their numbers in metric or imperial, the core's plot and words follow the
choice, and every number is checked against an independent conversion of the command
line's SI JSON: 1 in = 0.0254 m, 1 lb = 0.45359237 kg, 1 lbf = 1 lb x 9.80665 m/s^2, all
exact by definition (NIST SP 811, appendix B). Every plot and map saves its numbers as CSV
through one helper (panels/export.js), checked against the command line's JSON and the
panels' own data. The axe-core audit stays at zero in the states added here."""

from __future__ import annotations

import csv
import io
import json
import math
import re

import pytest

from pagekit import (LAPTOP, TABLET_PORTRAIT, axe_violations, cli_json, open_page, press, shot,
                     wait_for_result)

pytestmark = pytest.mark.browser

IN, FT, LB, G0 = 0.0254, 0.3048, 0.45359237, 9.80665
LBF = LB * G0
PHONE = {"width": 390, "height": 844}
SIZES = {
    "desktop": {"viewport": LAPTOP},
    "tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
    "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True},
}
LONG_MS = 240_000


def four_figures(got: float, want: float) -> None:
    # The page writes 4 significant figures: off by at most half a unit in the 4th.
    assert abs(got - want) <= 0.5 * 10 ** (math.floor(math.log10(abs(want))) - 3) * 1.000001, (got, want)


def number_before(text: str, unit: str) -> float:
    match = re.search(r"(-?[\d.]+(?:e-?\d+)?) " + re.escape(unit) + r"(?![\w/])", text)
    assert match, f"no number in {unit!r} in {text!r}"
    return float(match.group(1))


def wait_state(page, selector: str, states=("fresh",), timeout=LONG_MS) -> None:
    page.wait_for_function("([sel, states]) => states.includes(document.querySelector(sel)?.dataset.state)",
                           arg=[selector, list(states)], timeout=timeout)


def loads_in(page, units: str) -> None:
    page.wait_for_function("(u) => { const el = document.getElementById('loads-result');"
                           " return el.dataset.state === 'fresh' && el.dataset.units === u; }",
                           arg=units, timeout=LONG_MS)


@pytest.mark.parametrize("size", SIZES)
def test_loads_and_run_up_follow_the_units(new_context, server, size, tmp_path):
    touch = size != "desktop"
    page = new_context(bypass_csp=True, **SIZES[size]).new_page()
    open_page(page, server.url)
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    cli = cli_json("loads", rig, tmp_path)  # the command line's SI numbers, same rig
    page.check('input[name="units"][value="imperial"]')
    press(page, "#loads-go", touch)
    loads_in(page, "imperial")
    peak = page.locator('#loads-result tr[data-key="drive_force_peak"] td[data-value]')
    assert peak.get_attribute("data-unit") == "lbf"
    four_figures(number_before(peak.inner_text(), "lbf"), cli["drive_force_N"]["peak"] / LBF)
    tension = page.locator('#loads-result tr[data-key="link1_tension"] td[data-value]').inner_text()
    four_figures(number_before(tension, "lbf"), cli["links"][0]["max_tension_N"] / LBF)
    accel = page.locator('#loads-result tr[data-key="accel_peak"] td[data-value]').inner_text()
    four_figures(number_before(accel, "ft/s²"), cli["peak_accel_m_s2"] / FT)
    lead = page.inner_text("#loads-result > p:not(.load-flags)")
    four_figures(number_before(lead, "in"), cli["stroke_m"] / IN)
    assert "force (lbf" in page.inner_html("#loads-result svg")  # the core's plot, in lbf
    words = page.text_content("#loads-result .report-text pre")
    assert " lbf" in words and " N," not in words  # the core's words in lbf too
    # the run-up: the stroke in inches
    press(page, "#runup-go", touch)
    wait_state(page, "#runup-result")
    runup = json.loads(page.get_attribute("#runup-result", "data-result"))
    four_figures(number_before(page.inner_text("#runup-result"), "in"), runup["stroke_m"] / IN)
    assert " mm" not in page.inner_text("#runup-result")
    assert page.evaluate("() => document.documentElement.scrollWidth <= window.innerWidth")
    found = axe_violations(page)
    assert found == [], f"{size}, imperial loads and run-up: {found}"
    page.locator("#loads-result").scroll_into_view_if_needed()
    shot(page, f"panel-units-imperial-{size}-loads", full_page=False)
    # back to metric: the loads are worked out again in newtons, the run-up rewritten in mm
    page.check('input[name="units"][value="metric"]')
    loads_in(page, "metric")
    peak = page.locator('#loads-result tr[data-key="drive_force_peak"] td[data-value]').inner_text()
    four_figures(number_before(peak, "N"), cli["drive_force_N"]["peak"])
    four_figures(number_before(page.inner_text("#runup-result"), "mm"), runup["stroke_m"] * 1000)
    assert page.get_attribute("#runup-result", "data-state") == "fresh"


def test_panels_in_dark_mode_and_imperial_pass_the_audit(booted):
    # booted pages of the worker, reset to a first visit with the panels' work forgotten
    # (conftest.BootedPages; tests/browser/test_reset_first_visit.py)
    page = booted(viewport=LAPTOP, color_scheme="dark", bypass_csp=True)
    wait_for_result(page)
    page.check('input[name="units"][value="imperial"]')
    page.click("#loads-go")
    page.click("#runup-go")
    loads_in(page, "imperial")
    wait_state(page, "#runup-result")
    page.click("#runup-result details.how summary")
    assert page.is_visible("#runup-result details.how p")
    found = axe_violations(page)
    assert found == [], f"dark, imperial: {found}"
    for where in ("#loads-result", "#runup-result"):
        page.locator(where).scroll_into_view_if_needed()
        shot(page, f"panel-units-dark-imperial-{where[1:]}", full_page=False)


def read_csv(download) -> list[list[str]]:
    with open(download.path(), encoding="utf-8") as fh:
        return list(csv.reader(io.StringIO(fh.read())))


def save(page, holder: str):
    button = f'button[data-save-from="{holder}"][data-save-as="csv"]'
    page.wait_for_function("(b) => !document.querySelector(b).disabled", arg=button, timeout=LONG_MS)
    with page.expect_download() as info:
        page.click(button)
    return info.value


def test_every_plot_saves_its_numbers_as_csv(demo_page, tmp_path):
    page = demo_page
    wait_for_result(page)
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    # every picture holder on the page has SVG, PNG and CSV buttons
    holders = page.evaluate("""() => [...new Set([...document.querySelectorAll('button[data-save-from]')]
        .map((b) => b.dataset.saveFrom))]""")
    for holder in holders:
        kinds = page.evaluate("(h) => [...document.querySelectorAll(`button[data-save-from='${h}']`)]"
                              ".map((b) => b.dataset.saveAs).sort()", holder)
        assert kinds == ["csv", "png", "svg"], (holder, kinds)
    assert set(holders) >= {"motion-plot", "basin-map", "loads-result", "fit-plot", "lean-chart"}
    assert page.is_disabled('button[data-save-from="loads-result"][data-save-as="csv"]')
    # loads: the samples over the cycle, as the command line's JSON gives them (SI)
    page.click("#loads-go")
    loads_in(page, "metric")
    rows = read_csv(save(page, "loads-result"))
    cli = cli_json("loads", rig, tmp_path)["samples"]
    assert rows[0] == ["phase_rad", "drive_force_N", "link1_axial_N"]
    assert len(rows) - 1 == len(cli["phase_rad"])
    for k in (0, len(rows) // 2, len(rows) - 2):
        got = [float(v) for v in rows[k + 1]]
        want = [cli["phase_rad"][k], cli["drive_force_N"][k], cli["axial_N"][0][k]]
        assert got == pytest.approx(want, rel=1e-9, abs=1e-12)  # CPython and Pyodide, same core
    # the recovery map: one row per start, as the map's own data says
    page.select_option("#basin-size", "21")
    page.click("#basin-go")
    wait_state(page, "#basin-map", ("done",))
    recovered = json.loads(page.get_attribute("#basin-map", "data-recovered"))
    rows = read_csv(save(page, "basin-map"))
    assert rows[0] == ["release_angle_rad", "rate_rad_s", "recovered"]
    assert len(rows) - 1 == sum(len(r) for r in recovered) == 21 * 21
    flat = [("" if ok is None else str(int(ok))) for r in recovered for ok in r]
    assert [r[2] for r in rows[1:]] == flat
    # the fit: every sample of the log, logged and fitted angles
    page.click("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.length > 100")
    page.click("#fit-go")
    wait_state(page, "#fit-result", timeout=LONG_MS)
    result = json.loads(page.get_attribute("#fit-result", "data-result"))
    rows = read_csv(save(page, "fit-plot"))
    assert rows[0] == ["t_s", "link1_logged_deg", "link1_fitted_deg"]
    assert len(rows) - 1 == result["samples"]
    log = [line for line in page.input_value("#fit-log").splitlines()
           if line.strip() and not line.startswith("#")]  # header, then samples
    first = log[1].split(",")
    assert float(rows[1][0]) == pytest.approx(float(first[0]), abs=1e-12)  # the log's own time
    assert float(rows[1][1]) == pytest.approx(float(first[1]), abs=1e-9)  # and angle, same zero
    # the motion plot: the run's frames (the same file as `shakestill simulate -o`)
    page.fill("#motion-duration", "1")
    page.click("#motion-run")
    wait_state(page, "#motion-anim")
    rows = read_csv(save(page, "motion-plot"))
    assert rows[0][0] == "t_s" and len(rows) > 10


def test_fit_numbers_follow_the_units(booted):
    page = booted(**SIZES["tablet"])
    wait_for_result(page)
    page.tap("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.length > 100")
    page.locator("#fit-go").scroll_into_view_if_needed()
    page.tap("#fit-go")
    wait_state(page, "#fit-result", timeout=LONG_MS)
    cell = page.locator('#fit-result tr[data-path="links[0].joint_damping_N_m_s"] td[data-value]')
    value = float(cell.get_attribute("data-value"))
    four_figures(number_before(cell.inner_text(), "N m s"), value)
    page.check('input[name="units"][value="imperial"]')
    cell = page.locator('#fit-result tr[data-path="links[0].joint_damping_N_m_s"] td[data-value]')
    assert cell.get_attribute("data-unit") == "lbf in s"
    four_figures(number_before(cell.inner_text(), "lbf in s"), value / (LBF * IN))
    page.locator("#fit-result").scroll_into_view_if_needed()
    shot(page, "panel-units-imperial-fit", full_page=False)
