"""The run-up panel with its rate left blank: the page asks the engine for the slowest safe
ramp rate and says so, with the numbers `shakestill runup --json` gives on the demo rig (the
command line on CPython is the independent value; the rate itself is checked against
solve_ivp in tests/test_runup.py and tests/test_bridge_ops.py)."""

from __future__ import annotations

import json

import pytest

from pagekit import RESULT_TIMEOUT_MS, assert_same_numbers, cli_json, wait_for_result
import shakestill as ss

pytestmark = pytest.mark.browser


def wait_runup(page):
    page.wait_for_function("() => document.getElementById('runup-result').dataset.state === 'fresh'",
                           timeout=RESULT_TIMEOUT_MS)
    return json.loads(page.get_attribute("#runup-result", "data-result"))


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
