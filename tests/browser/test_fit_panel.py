"""The fit section ("Check the model against the real rig") in headless Chromium:
a bad log named by row and column with the text kept, the invented sample log
fitted by the page and by the command line, the fitted numbers put in the rig
sheet with undo, a rig edit stopping a fit, Cancel, touch sizes, print and
screenshots.

One page of the demo rig is opened for the module; the tests run in file
order on it. Independent values: `shakestill fit RIG --log FILE --fit damping
--json` in a subprocess (CPython; the page runs the same core in Pyodide) and
the core's bridge on CPython for the problems of a bad log.
"""

from __future__ import annotations

import json
import math
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from shakestill import bridge

from pagekit import (RESULT_TIMEOUT_MS, TOP, TOUCH_SIZES, open_page, open_watched, shot, wait_for_result,
                     wait_for_rig)

pytestmark = pytest.mark.browser

SAMPLE = TOP / "site" / "sample-decay.csv"
DAMPING = "links[0].joint_damping_N_m_s"
FIT_REL = 1e-6  # page (Pyodide) vs command line (CPython): libm may differ in the last bits
SAMPLE_DAMPING = 0.0009  # the damping site/sample-decay.csv was made with (its own header says so)
BAD_LOG = "t_s,angle_xx\n0.00,25.0\n0.01,24.9\n0.02,24.6\n"


@pytest.fixture(scope="module")
def fit_page(browser, server):
    page = open_watched(browser, server.url)
    yield page
    page.context.close()


def rig_of(page) -> dict:
    """The rig as the core read it (SI), from the verdict."""
    return json.loads(page.get_attribute("#check-report", "data-rig"))


def cli_fit(rig: dict, log: str, tmp_path: Path, *args: str) -> dict:
    """`shakestill fit rig.json --log log.csv --fit damping --json ARGS`, as the command line gives it."""
    (tmp_path / "rig.json").write_text(json.dumps(rig))
    (tmp_path / "log.csv").write_text(log)
    exe = shutil.which("shakestill", path=str(Path(sys.executable).parent)) or shutil.which("shakestill")
    base = [exe] if exe else [sys.executable, "-m", "shakestill.cli"]
    done = subprocess.run([*base, "fit", str(tmp_path / "rig.json"), "--log", str(tmp_path / "log.csv"),
                           "--fit", "damping", "--zero", "hanging", "--json", *args],
                          capture_output=True, text=True, timeout=600)
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


def start_fit(page) -> None:
    page.click("#fit-go")


def wait_for_fit(page, timeout: int = RESULT_TIMEOUT_MS) -> dict:
    page.wait_for_function("""() => document.getElementById("fit-result").dataset.state === "fresh"
        && document.getElementById("fit-cancel").hidden""", timeout=timeout)
    return json.loads(page.get_attribute("#fit-result", "data-result"))


def shown_parameter(page, path: str) -> dict:
    cell = page.locator(f'#fit-result tr[data-path="{path}"] td[data-value]')
    return {"value": float(cell.get_attribute("data-value")),
            "std_error": float(cell.get_attribute("data-std-error") or "nan"),
            "text": cell.inner_text()}


def checked_with_damping(page, value: float) -> None:
    """Wait for a fresh check of a rig whose first joint damping the core read as `value`."""
    page.wait_for_function("""(v) => {
        const el = document.getElementById("check-report");
        return el.dataset.state === "fresh" && JSON.parse(el.dataset.rig).links[0].joint_damping_N_m_s === v;
    }""", arg=value, timeout=RESULT_TIMEOUT_MS)


def fmt(value: float, digits: int) -> str:
    """The page's number format (`digits` significant figures, no trailing zeros)."""
    return f"{float(f'{value:.{digits}g}'):.6g}"


def sheet_number(page, path: str) -> float:
    """The number in a rig sheet field ("0.00089977 N m s" -> 0.00089977)."""
    return float(page.input_value(f'#rig-sheet [data-path="{path}"]').split()[0])


# ---------------------------------------------------------------- bad input


def test_a_bad_log_is_named_by_column_and_kept(fit_page):
    page = fit_page
    page.fill("#fit-log", BAD_LOG)
    start_fit(page)
    page.wait_for_selector('#fit-log-msgs li[data-path="log.header[1]"]', timeout=RESULT_TIMEOUT_MS)
    # the same problems as the core on CPython gives for this log (exact words, same order)
    want = bridge.call({"op": "fit", "rig": rig_of(page), "log": BAD_LOG, "reference": "hanging",
                        "parameters": ["damping"]})
    assert not want["ok"]
    shown = page.locator("#fit-log-msgs li")
    assert shown.count() == len(want["problems"])
    for i, problem in enumerate(want["problems"]):
        assert shown.nth(i).get_attribute("data-path") == problem["path"]
        text = shown.nth(i).inner_text()
        assert problem["path"] in text and problem["message"] in text, (text, problem)
    assert "Header row, column 2" in shown.nth(0).inner_text()  # log.header[1] in words
    # nothing typed is lost, and the box is marked for assistive technology
    assert page.input_value("#fit-log") == BAD_LOG
    assert page.get_attribute("#fit-log", "aria-invalid") == "true"
    assert page.get_attribute("#fit-result", "data-state") == "empty"
    shot(page, "laptop-fit-bad-log")


# ---------------------------------------------------------------- the sample, fitted


def test_sample_fit_matches_the_command_line(fit_page, tmp_path):
    page = fit_page
    if not page.input_value("#fit-log"):  # run alone: something typed for the sample to replace
        page.fill("#fit-log", "t_s,angle_deg\n0,1")
    page.click("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.startsWith('# Invented')")
    log = page.input_value("#fit-log")
    assert log == SAMPLE.read_text()  # the file in site/, fetched as it is
    assert "invented" in page.inner_text("#fit-log-source").lower()
    assert page.get_attribute("#fit-log", "aria-invalid") == "false"  # the last problems are gone
    # what was typed before is one button away
    assert page.is_visible("#fit-log-back")
    start_fit(page)
    page.wait_for_selector("#fit-cancel:not([hidden])")
    result = wait_for_fit(page)
    want = cli_fit(rig_of(page), log, tmp_path)
    got = shown_parameter(page, DAMPING)
    ref = next(p for p in want["parameters"] if p["path"] == DAMPING)
    # shakestill fit --json on CPython: the fitted damping within 1e-6 relative
    assert math.isclose(got["value"], ref["value"], rel_tol=FIT_REL), (got, ref)
    assert math.isclose(result["parameters"][0]["value"], ref["value"], rel_tol=FIT_REL)
    # the standard error comes from the same Jacobian: 1e-4 relative (a difference quotient of runs)
    assert math.isclose(got["std_error"], ref["std_error"], rel_tol=1e-4), (got, ref)
    # the RMS misfits before and after, 1e-6 relative; the same verdict on settling
    assert math.isclose(result["rms_start_rad"], want["rms_start_rad"], rel_tol=FIT_REL)
    assert math.isclose(result["rms_rad"], want["rms_rad"], rel_tol=FIT_REL)
    assert result["converged"] == want["converged"] is True
    # the sample was made with 0.0009 N m s and a little noise: the fit finds it within 5 standard
    # errors (sample header; the noise is what the standard error measures)
    assert abs(got["value"] - SAMPLE_DAMPING) < 5 * got["std_error"], got
    # shown as start -> fitted +- standard error, 4 and 2 significant figures
    assert f"{fmt(ref['value'], 4)} N m s ± " in got["text"], got
    assert page.locator('#fit-result tr[data-path] td[data-start]').inner_text() == "0.0003 N m s"
    rms = page.inner_text('#fit-result [data-key="rms"] dd')
    assert f"{fmt(math.degrees(want['rms_rad']), 3)}°" in rms, rms
    assert "Yes" in page.inner_text('#fit-result [data-key="settled"] dd')
    # the core's plot, inserted as SVG, and its words
    assert page.locator("#fit-plot svg[role='img']").count() == 1
    assert page.get_attribute("#fit-plot", "data-state") == "fresh"
    assert "Fit to a logged run" in page.text_content("#fit-result .report-text pre")
    assert page.is_enabled("#fit-apply")
    assert page.errors == []
    shot(page, "laptop-fit-result")


def test_use_the_fitted_numbers_with_undo(fit_page):
    page = fit_page
    fitted = shown_parameter(page, DAMPING)["value"]
    before = sheet_number(page, DAMPING)
    page.click("#fit-apply")
    # the rig sheet's link field holds the fitted damping (the core's number, exactly as sent)
    page.wait_for_function("""(v) => {
        const el = document.querySelector('#rig-sheet [data-path="links[0].joint_damping_N_m_s"]');
        return el && parseFloat(el.value) === v; }""", arg=fitted)
    assert sheet_number(page, DAMPING) == fitted
    # and a fresh check follows for that rig (verdict's data-rig, as the core read it)
    checked_with_damping(page, fitted)
    assert page.get_attribute("#fit-result", "data-state") == "applied"
    assert not page.is_enabled("#fit-apply")
    # the page's undo brings the rig before the fit back; the fit is then of the rig on the sheet again
    page.click("#notice-actions button:has-text('Bring back my previous rig')")
    page.wait_for_function("""(v) => parseFloat(document.querySelector(
        '#rig-sheet [data-path="links[0].joint_damping_N_m_s"]').value) === v""", arg=before)
    page.wait_for_function("() => document.getElementById('fit-result').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    assert page.is_enabled("#fit-apply")
    # the same undo beside the button, for someone who is down at the fit (keyboard focus follows)
    page.click("#fit-apply")
    assert page.evaluate("document.activeElement.id") == "fit-undo"
    assert sheet_number(page, DAMPING) == fitted
    page.keyboard.press("Enter")
    page.wait_for_function("""(v) => parseFloat(document.querySelector(
        '#rig-sheet [data-path="links[0].joint_damping_N_m_s"]').value) === v""", arg=before)
    assert page.get_attribute("#fit-result", "data-state") == "fresh"
    assert page.evaluate("document.activeElement.id") == "fit-apply"
    checked_with_damping(page, before)


# ---------------------------------------------------------------- stopping


def test_a_rig_edit_stops_the_fit_and_marks_the_result_stale(fit_page):
    page = fit_page
    start_fit(page)
    page.wait_for_selector("#fit-cancel:not([hidden])")
    page.fill('#rig-sheet [data-path="title"]', "Edited while fitting")
    page.wait_for_function("() => document.getElementById('fit-status').textContent.includes('rig changed')",
                           timeout=RESULT_TIMEOUT_MS)
    assert page.is_hidden("#fit-cancel")
    assert page.get_attribute("#fit-result", "data-state") == "stale"
    assert page.get_attribute("#fit-plot", "data-state") == "stale"
    assert not page.is_enabled("#fit-apply")
    wait_for_rig(page, "Edited while fitting")
    assert page.get_attribute("#fit-result", "data-state") == "stale"


def test_cancel_stops_the_fit_and_keeps_the_log(fit_page):
    page = fit_page
    log = page.input_value("#fit-log")
    start_fit(page)
    page.wait_for_selector("#fit-cancel:not([hidden])")
    page.click("#fit-cancel")
    page.wait_for_function("() => document.getElementById('fit-status').textContent.includes('cancelled')")
    assert page.is_hidden("#fit-cancel") and page.is_enabled("#fit-go")
    assert page.input_value("#fit-log") == log
    # a fit after the cancel runs to the end for the edited rig
    start_fit(page)
    wait_for_fit(page)
    assert page.errors == []


def test_a_log_without_speeds_with_the_drive_stopped(fit_page, tmp_path):
    """No speed column: ticking 'the drive stood still' fits a free swing, as `--stopped` does."""
    page = fit_page
    rows = [line for line in SAMPLE.read_text().splitlines() if not line.startswith("#")]
    log = "\n".join(",".join(line.split(",")[:2]) for line in rows) + "\n"  # t_s,angle_deg only
    page.fill("#fit-log", log)
    page.check("#fit-stopped")
    start_fit(page)
    page.wait_for_selector("#fit-cancel:not([hidden])")
    result = wait_for_fit(page)
    want = cli_fit(rig_of(page), log, tmp_path, "--stopped")
    # shakestill fit --stopped --json on CPython: the same damping within 1e-6 relative
    assert math.isclose(result["parameters"][0]["value"], want["parameters"][0]["value"], rel_tol=FIT_REL)
    assert math.isclose(shown_parameter(page, DAMPING)["value"], want["parameters"][0]["value"],
                        rel_tol=FIT_REL)
    page.uncheck("#fit-stopped")
    page.fill("#fit-log", SAMPLE.read_text())


# ---------------------------------------------------------------- touch, print, tablet


TOO_SMALL = """() => [...document.querySelectorAll(
    ".fit button, .fit textarea, .fit label.button, .fit .axis-toggle label, .fit summary")]
  .filter((el) => !el.closest("[hidden]"))
  .map((el) => [el.id || el.textContent.trim().slice(0, 30), el.getBoundingClientRect()])
  .filter(([, r]) => r.height < 44 || r.width < 44).map(([name]) => name)"""


def test_print_keeps_the_fit_without_its_controls(fit_page):
    page = fit_page
    page.emulate_media(media="print")
    try:
        assert page.is_visible("#fit-result .fit-table") and page.is_visible("#fit-plot svg")
        assert page.is_hidden("#fit-form") and page.is_hidden("#fit-apply")
    finally:
        page.emulate_media(media="screen")


def test_tablet_touch_targets_and_screenshot(booted):
    # the worker's booted tablet page, reset to a first visit (conftest.BootedPages)
    page = booted(**TOUCH_SIZES["tablet"])
    wait_for_result(page)
    page.click("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.length > 0")
    start_fit(page)
    wait_for_fit(page)
    # touch targets of at least 44 by 44 CSS px (the page's --tap size)
    assert page.evaluate(TOO_SMALL) == []
    page.locator("section.fit").scroll_into_view_if_needed()
    shot(page, "tablet-fit-result")
    assert page.context.recorder.errors == []


def test_sample_loads_in_the_single_file(new_context, offline_file):
    """The sample is a site file: the single file carries it in its archive and answers the fetch."""
    page = new_context().new_page()
    open_page(page, offline_file.as_uri())
    page.click("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.length > 0")
    assert page.input_value("#fit-log") == SAMPLE.read_text()
