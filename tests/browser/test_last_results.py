"""After a reload the work panels' last results come back as they were, marked as from the last
session until they are worked out again (issue 16: "After a reload the whole state comes back:
every panel's inputs and last results ..., marked as from the last session until recomputed").

The numbers that come back are held to the core on CPython (shakestill.bridge, the same ops the
page's worker runs in Pyodide) to 1e-9 relative, as the panels' own tests hold the fresh ones;
a result kept for one rig never shows as current for another.
"""

from __future__ import annotations

import json

import pytest
from shakestill import bridge

from pagekit import (BOOT_TIMEOUT_MS, TOUCH_SIZES, assert_same_numbers, axe_violations, close_sheet,
                     open_sheet, press, shot, wait_for_result)

pytestmark = pytest.mark.browser

LONG_MS = 300_000  # the knock tolerance and the recovery map: tens of seconds of engine time
HOLDERS = {"runup": "#runup-result", "loads": "#loads-result", "motion": "#motion-anim",
           "tolerance": "#tolerance-result", "basin": "#basin-map", "fit": "#fit-result"}
# Where each panel says the result is the last session's.
NOTES = {"runup": "#runup-messages", "loads": "#loads-result", "motion": "#motion-events",
         "tolerance": "#tolerance-result", "basin": "#basin-map", "fit": "#fit-result"}
# The first 60 samples of the invented sample log: a fit of a second or so.
SHORT_LOG = "\n".join(["t_s,angle_deg,speed_rpm"] + [f"{0.01 * k:.2f},{25 * 0.97 ** k:.3f},0"
                                                   for k in range(60)]) + "\n"


def marks(page, selector: str) -> list:
    return page.eval_on_selector(selector, "el => [el.dataset.state, el.dataset.kept || null]")


def data(page, selector: str, name: str):
    return json.loads(page.get_attribute(selector, f"data-{name}"))


def wait_state(page, selector: str, state: str, timeout: int = LONG_MS) -> None:
    page.wait_for_function("([sel, state]) => document.querySelector(sel).dataset.state === state",
                           arg=[selector, state], timeout=timeout)


def assert_marked_last_session(page, panels) -> None:
    for panel in panels:
        assert marks(page, HOLDERS[panel]) == ["cached", "last-session"], panel
        note = page.locator(f"{NOTES[panel]} .last-session")
        assert note.count() == 1, panel
        assert note.inner_text().startswith("From your last session ("), panel


@pytest.mark.parametrize("size", ["desktop", "tablet", "phone"])
def test_run_up_loads_and_motion_come_back_marked_after_a_reload(booted, size):
    page = booted(**TOUCH_SIZES.get(size, {}))  # it reloads the page; the next reset boots again
    touch = size != "desktop"
    page.fill("#runup-rate", "40")
    press(page, "#runup-go", touch)
    wait_state(page, "#runup-result", "fresh")
    press(page, "#loads-go", touch)
    wait_state(page, "#loads-result", "fresh")
    page.fill("#motion-duration", "1")
    press(page, "#motion-run", touch)
    wait_state(page, "#motion-anim", "fresh")
    rig = data(page, "#check-report", "rig")
    request = data(page, "#motion-anim", "request")
    before = {"runup": data(page, "#runup-result", "result"), "loads": data(page, "#loads-result", "result"),
              "motion": data(page, "#motion-anim", "summary")}

    page.reload()
    # At once, before the engine's own check: every result back, marked, its numbers as before.
    page.wait_for_selector("#motion-anim[data-state='cached']", timeout=30_000)
    assert page.get_attribute("#check-report", "data-state") != "fresh"
    assert_marked_last_session(page, ["runup", "loads", "motion"])
    page.locator("#runup-result").scroll_into_view_if_needed()
    shot(page, f"last-session-runup-{size}", full_page=False)
    kept = {"runup": data(page, "#runup-result", "result"), "loads": data(page, "#loads-result", "result"),
            "motion": data(page, "#motion-anim", "summary")}
    assert kept == before
    # ... and equal to the core on CPython for the same rig and request (1e-9 relative)
    runup = bridge.call({"op": "runup", "rig": rig, "rate_rpm_s": 40, "start_rpm": 0, "factor": 10})
    assert_same_numbers(kept["runup"], runup["result"], where="runup")
    loads = bridge.call({"op": "loads", "rig": rig, "equilibrium": page.input_value("#motion-start"),
                         "units": "metric"})
    del loads["result"]["samples"]  # the page keeps them for its CSV, not in data-result
    assert_same_numbers(kept["loads"], loads["result"], where="loads")
    # the run: its length, its frames and whether it fell, as the core on CPython runs it (the
    # angles themselves may part in the last bits between the two Pythons' libm)
    motion = bridge.call({"op": "simulate", "rig": rig, **request})
    assert kept["motion"]["end_t_s"] == pytest.approx(motion["summary"]["end_t_s"], rel=1e-12)
    assert kept["motion"]["fell"] is motion["summary"]["fell"]
    # the motion's frames are back too: the slider reaches the run's end
    assert int(page.get_attribute("#motion-time", "max")) == len(motion["frames"]["t_s"]) - 1

    # The engine's check of the same rig leaves them marked as the last session's.
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    assert_marked_last_session(page, ["runup", "loads", "motion"])

    # Worked out again: current, and the note is gone.
    press(page, "#runup-go", touch)
    wait_state(page, "#runup-result", "fresh")
    assert marks(page, "#runup-result") == ["fresh", None]
    assert page.locator("#runup-messages .last-session").count() == 0
    assert_same_numbers(data(page, "#runup-result", "result"), runup["result"], where="runup again")

    # A rig edit: what was kept is of an earlier rig now.
    open_sheet(page)
    page.locator('#rig-sheet [data-path="drive.speed_rpm"]').fill("2600 rpm")
    close_sheet(page)
    wait_state(page, "#loads-result", "stale", timeout=BOOT_TIMEOUT_MS)
    wait_state(page, "#motion-anim", "stale", timeout=BOOT_TIMEOUT_MS)


def test_tolerance_map_and_fit_come_back_marked_and_a_kept_fit_can_be_applied(booted):
    page = booted(bypass_csp=True)  # the accessibility audit's script goes in
    page.click("#tolerance-go")
    wait_state(page, "#tolerance-result", "fresh")
    page.select_option("#basin-size", "21")
    page.click("#basin-go")
    wait_state(page, "#basin-map", "done")
    page.fill("#fit-log", SHORT_LOG)
    page.click("#fit-go")
    page.wait_for_function("""() => document.getElementById("fit-result").dataset.state === "fresh"
        && document.getElementById("fit-cancel").hidden""", timeout=LONG_MS)
    rig = data(page, "#check-report", "rig")
    before = {"tolerance": data(page, "#tolerance-result", "result"),
              "basin": data(page, "#basin-map", "recovered"), "fit": data(page, "#fit-result", "result")}

    page.reload()
    page.wait_for_selector("#fit-result[data-state='cached']", timeout=30_000)
    assert page.get_attribute("#basin-map", "data-state") == "cached"
    assert page.is_visible("#basin-map svg")
    assert_marked_last_session(page, ["tolerance", "basin", "fit"])
    page.locator("#tolerance-result").scroll_into_view_if_needed()
    shot(page, "last-session-tolerance", full_page=False)
    assert axe_violations(page) == []  # the kept results' words and marks pass the audit too
    kept = {"tolerance": data(page, "#tolerance-result", "result"),
            "basin": data(page, "#basin-map", "recovered"), "fit": data(page, "#fit-result", "result")}
    assert kept == before
    # the knock tolerance against the core on CPython (1e-9 relative)
    job = bridge.call({"op": "motion_job_start", "kind": "tolerance", "rig": rig})
    while not (step := bridge.call({"op": "motion_job_step", "job": job["job"], "budget_ms": 2000}))["done"]:
        pass
    assert_same_numbers(kept["tolerance"], step["result"], where="tolerance")
    # the fitted number shown is the kept one, and the fitted rig can still be applied
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    assert marks(page, "#fit-result") == ["cached", "last-session"]
    assert page.is_enabled("#fit-apply")
    fitted = kept["fit"]["parameters"][0]
    old = fitted_value(page, fitted["path"])  # read before the click: the engine may answer first
    page.click("#fit-apply")
    rig_after = wait_for_fitted(page, fitted["path"], old)
    assert rig_after == pytest.approx(fitted["value"], rel=1e-12)
    assert page.get_attribute("#fit-result", "data-state") == "applied"
    # the sheet holds the fitted rig now: the kept tolerance and map are of an earlier rig, and
    # a print leaves both out and says so (the rule of tests/browser/test_print_earlier.py)
    wait_state(page, "#tolerance-result", "stale", timeout=BOOT_TIMEOUT_MS)
    assert page.get_attribute("#basin-map", "data-state") == "stale"
    page.evaluate("() => window.dispatchEvent(new Event('beforeprint'))")
    page.emulate_media(media="print")
    try:
        for selector in ("#tolerance-result", "#basin-map"):
            words = page.evaluate("(sel) => getComputedStyle(document.querySelector(sel), '::before').content",
                                  selector)
            assert "Left out" in words and "earlier rig" in words, selector
        assert "2 results of an earlier rig left out." in page.inner_text("#print-stamp")
    finally:
        page.emulate_media(media="screen")
        page.evaluate("() => window.dispatchEvent(new Event('afterprint'))")


def _link_field(path: str) -> tuple[int, str]:
    link, name = path.split(".")
    return int(link[len("links["):-1]), name


def fitted_value(page, path: str) -> float:
    """The number at ``path`` (links[0].joint_damping_N_m_s, say) in the rig the check read."""
    index, name = _link_field(path)
    return data(page, "#check-report", "rig")["links"][index][name]


def wait_for_fitted(page, path: str, old: float) -> float:
    """The number at ``path`` once a fresh check has read a rig where it is no longer ``old``
    (read before the action that changes it: a fast engine can answer before this starts)."""
    index, name = _link_field(path)
    page.wait_for_function("""([i, name, old]) => {
        const el = document.getElementById("check-report");
        const rig = el.dataset.rig && JSON.parse(el.dataset.rig);
        return el.dataset.state === "fresh" && rig && rig.links[i][name] !== old;
    }""", arg=[index, name, old], timeout=BOOT_TIMEOUT_MS)
    return fitted_value(page, path)


def test_inputs_typed_just_before_a_reload_are_kept(booted):
    # Inputs are saved after a pause in typing (state/panel-inputs.js); a reload inside the
    # pause must keep them too (they go at pagehide), as the rig sheet's autosave does.
    page = booted()
    page.fill("#runup-rate", "55")
    page.fill("#motion-duration", "2.5")
    page.reload()
    page.wait_for_selector("#runup-rate")
    assert page.input_value("#runup-rate") == "55"
    assert page.input_value("#motion-duration") == "2.5"


def test_plan_and_lean_chart_come_back_marked_and_the_plan_stays_on_the_map(booted):
    page = booted(bypass_csp=True)
    page.click("#plan-go")
    wait_state(page, "#plan-result", "fresh")
    page.click("#lean-go")
    wait_state(page, "#lean-chart", "fresh")
    rig = data(page, "#check-report", "rig")
    before = {"plan": data(page, "#plan-result", "result"), "lean": data(page, "#lean-chart", "result")}

    page.reload()
    page.wait_for_selector("#lean-chart[data-state='cached']", timeout=30_000)
    for selector in ("#plan-result", "#lean-chart"):
        assert marks(page, selector) == ["cached", "last-session"], selector
        assert page.locator(f"{selector} .last-session").inner_text().startswith("From your last session (")
    assert {"plan": data(page, "#plan-result", "result"), "lean": data(page, "#lean-chart", "result")} == before
    assert axe_violations(page) == []
    # the plan's recommended point against the core on CPython (1e-9 relative)
    job = bridge.call({"op": "motion_job_start", "kind": "plan", "rig": rig, "for": "inverted"})
    while not (step := bridge.call({"op": "motion_job_step", "job": job["job"], "budget_ms": 2000}))["done"]:
        pass
    for key in ("speed_rpm", "stroke_m"):
        assert before["plan"][key] == pytest.approx(step["result"][key], rel=1e-9), key
    # the kept plan's region is drawn over the map once the engine has drawn it for this rig
    page.wait_for_function("() => document.getElementById('stability-chart').dataset.state === 'done'",
                           timeout=BOOT_TIMEOUT_MS)
    assert page.locator("#stability-chart .robust-overlay").count() == 1
    assert marks(page, "#plan-result") == ["cached", "last-session"]
