"""The run-up panel with its rate left blank: the page asks the engine for the slowest safe
ramp rate and says so, with the numbers `shakestill runup --json` gives on the demo rig (the
command line on CPython is the independent value; the rate itself is checked against
solve_ivp in tests/test_runup.py and tests/test_bridge_ops.py)."""

from __future__ import annotations

import json

import pytest

from pagekit import RESULT_TIMEOUT_MS, assert_same_numbers, cli_json, wait_for_result
import shakestill as ss
from shakestill.model.share import encode

pytestmark = pytest.mark.browser


def wait_runup(page):
    page.wait_for_function("() => document.getElementById('runup-result').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    return json.loads(page.get_attribute("#runup-result", "data-result"))


def run_up_rig(page, data, rate="100"):
    """Open the rig `data` by its share link, wait until the sheet holds it (by its title:
    a rig the check refuses shows no fresh verdict), and run the run-up at `rate`."""
    page.evaluate("(f) => { location.hash = f; }", encode(data))
    page.wait_for_function("(t) => [...document.querySelectorAll('input')].some("
                           "(e) => e.value === t)", arg=data["title"], timeout=RESULT_TIMEOUT_MS)
    page.fill("#runup-rate", rate)
    page.click("#runup-go")
    return wait_runup(page)


def test_a_blank_rate_runs_at_the_recommended_rate_and_says_so(demo_page, tmp_path):
    page = demo_page  # booted once per worker, reset to a first visit (conftest.BootedPages)
    wait_for_result(page)
    page.fill("#runup-rate", "")
    page.click("#runup-go")
    got = wait_runup(page)
    want = cli_json("runup", ss.demo_rig_dict(), tmp_path)  # no --rate: recommended
    assert want["rate_recommended"] is True
    assert_same_numbers(got, want, rel=1e-9, where="runup")
    words = page.inner_text("#runup-result [data-key=recommended]")
    shown = float(f"{want['rate_rpm_s']:.4g}")  # four significant digits, as the panel
    assert f"{shown:g} rpm/s is the slowest ramp" in words, words
    # At that slow rate the upright crossing's frozen estimate is past what it counts (e^700,
    # the documented cap; by hand the growth is about exp(sqrt(g/l) t) over ~700 s, far past
    # it): the page says "past", not a number; the hanging crossing's simulated growth is a
    # number, to 3 digits as the CLI's JSON gives it.
    (up,) = want["inverted"]["crossings"]
    assert up["simulated_amplification"] is None and up["amplification"] >= 1e304
    upright = page.inner_text("#runup-result li[data-eq=inverted]")
    assert "a small disturbance grows past ×1e304 (frozen-speed estimate" in upright, upright
    (down,) = want["hanging"]["crossings"]
    hanging = page.inner_text("#runup-result li[data-eq=hanging]")
    grown = float(f"{down['simulated_amplification']:.3g}")
    assert f"grows about ×{grown:g} (simulated" in hanging, hanging
    # a typed rate is used as typed, and the recommendation is not claimed for it
    page.fill("#runup-rate", "20")
    page.click("#runup-go")
    page.wait_for_function(
        "() => JSON.parse(document.getElementById('runup-result').dataset.result || '{}')"
        ".rate_rpm_s === 20", timeout=RESULT_TIMEOUT_MS)
    typed = json.loads(page.get_attribute("#runup-result", "data-result"))
    assert typed["rate_recommended"] is False
    assert page.locator("#runup-result [data-key=recommended]").count() == 0
    assert page.context.recorder.errors == []


def test_a_ramp_below_the_low_speed_floor_says_the_upright_pendulum_is_not_held(demo_page):
    # A slow drive: 150 rpm at a 3 mm stroke, under the speed where the peak pivot
    # acceleration reaches 0.05 g (A w^2 = 0.05 g: 173 rpm, hand), so the ramp crosses
    # nothing; upright the pendulum still falls at that speed. The panel says it is not held
    # there, with the multiplier the core gives on CPython (ss.stability), to 4 digits.
    page = demo_page
    wait_for_result(page)
    data = ss.demo_rig_dict()
    data["title"] = "Slow drive"
    data["drive"].update(waveform="sine", stroke_m=0.003, speed_rpm=150.0)
    rig = ss.rig_from_dict(data)
    got = run_up_rig(page, data)
    assert got["inverted"]["crossings"] == [] and got["inverted"]["ok"] is False
    want = ss.stability(rig, "inverted", speed_rpm=150.0).max_multiplier
    assert got["inverted"]["end_max_multiplier"] == pytest.approx(want, rel=1e-9)
    words = page.inner_text("#runup-result [data-key=not-held-inverted]")
    assert f"not held at 150 rpm: a small disturbance grows ×{float(f'{want:.3g}'):g}" in words
    assert page.locator("#runup-result [data-key=not-held-hanging]").count() == 0
    assert page.context.recorder.errors == []


def test_an_end_speed_past_what_the_method_resolves_is_said_not_known(demo_page):
    # A three-link rig run up to 0.2 rpm, far under the slowest speed its scans resolve
    # (about 10 rpm: the top sway mode more than 25 times the drive's frequency): the
    # upright verdict at the end is not known, and the page says so rather than "held" or
    # "not held", as `runup --json` gives held_at_end null on CPython.
    page = demo_page
    wait_for_result(page)
    data = ss.demo_rig_dict()
    data["title"] = "Three links, nearly still"
    data["links"] = [
        {"length_m": 0.12, "rod_mass_kg": 0.034, "point_masses": [{"mass_kg": 0.019, "at_m": 0.12}]},
        {"length_m": 0.11, "rod_mass_kg": 0.026, "point_masses": [{"mass_kg": 0.026, "at_m": 0.11}],
         "joint_damping_N_m_s": 1.7e-4},
        {"length_m": 0.055, "rod_mass_kg": 0.027, "point_masses": [{"mass_kg": 0.023, "at_m": 0.055}],
         "joint_damping_N_m_s": 1.5e-3}]
    data["drive"].update(waveform="crank", stroke_m=0.005, rod_length_m=0.165, speed_rpm=0.2)
    data["limits"]["speed_rpm"] = [0.1, 3600.0]
    got = run_up_rig(page, data)  # the check refuses the speed; the run-up still runs
    assert got["inverted"]["held_at_end"] is None and got["inverted"]["crossings"] == []
    words = page.inner_text("#runup-result [data-key=end-unknown-inverted]")
    assert "whether 0.2 rpm holds it is not known" in words, words
    # the summary is not the plain "within" of a run-up that holds both ends
    summary = page.locator("#runup-result .runup-summary")
    assert "is-unknown" in summary.get_attribute("class").split()
    assert "not known" in summary.inner_text()
    assert page.locator("#runup-result [data-key=not-held-inverted]").count() == 0
    assert page.context.recorder.errors == []
