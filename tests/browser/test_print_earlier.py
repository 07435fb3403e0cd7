"""A printed report leaves out results worked out for an earlier rig, and says so.

After a run-up is worked out, a change to the rig sheet leaves that run-up showing the
earlier rig's numbers (data-state "stale"). The printed copy (print media, after the page's
beforeprint handler) must not show them as if they were the sheet's: by default they are left
out with words saying why and the print stamp counts them; ticking "Print results of an
earlier rig too" prints them under the words "From an earlier rig". The rule is the issue's
own (common practice for printed engineering records, no source). Desktop, tablet (touch)
and phone sizes.
"""

from __future__ import annotations

import pytest

from pagekit import LAPTOP, RESULT_TIMEOUT_MS, TOUCH_SIZES, wait_for_result

pytestmark = pytest.mark.browser

# booted pages of the worker, reset to a first visit (conftest.BootedPages), with the other
# touch tests' context options (pagekit.TOUCH_SIZES) so their pages serve here too
SIZES = [("desktop", {"viewport": LAPTOP}), ("tablet", TOUCH_SIZES["tablet"]),
         ("phone", TOUCH_SIZES["phone"])]

BEFORE_TEXT = "(sel) => getComputedStyle(document.querySelector(sel), '::before').content"


def printed(page):
    page.evaluate("() => window.dispatchEvent(new Event('beforeprint'))")
    page.emulate_media(media="print")


def on_screen(page):
    page.emulate_media(media="screen")
    page.evaluate("() => window.dispatchEvent(new Event('afterprint'))")


@pytest.mark.parametrize("name, options", SIZES, ids=[s[0] for s in SIZES])
def test_results_of_an_earlier_rig_are_left_out_of_the_print(booted, name, options):
    page = booted(**options)
    wait_for_result(page)
    try:
        page.fill("#runup-rate", "20")
        page.click("#runup-go")
        page.wait_for_function("() => document.getElementById('runup-result').dataset.state "
                               "=== 'fresh'", timeout=RESULT_TIMEOUT_MS)
        previous = page.get_attribute("#check-report", "data-result")
        page.fill('[data-path="drive.stroke_m"]', "22 mm")
        wait_for_result(page, previous)  # the check follows the sheet; the run-up does not
        assert page.get_attribute("#runup-result", "data-state") == "stale"
        crossing = page.locator("#runup-result .crossing").first
        assert crossing.is_visible()

        printed(page)  # by default: left out, and said so
        assert not crossing.is_visible()
        words = page.evaluate(BEFORE_TEXT, "#runup-result")
        assert "Left out" in words and "earlier rig" in words, words
        assert "1 result of an earlier rig left out." in page.inner_text("#print-stamp")
        assert page.evaluate(BEFORE_TEXT, "#check-report") == "none"  # the check is current
        on_screen(page)
        assert crossing.is_visible() and page.get_attribute("#runup-result", "data-earlier") is None

        page.check("#print-earlier")  # asked for: printed, under its words
        printed(page)
        assert crossing.is_visible()
        assert "From an earlier rig" in page.evaluate(BEFORE_TEXT, "#runup-result")
        assert "left out" not in page.inner_text("#print-stamp")
        assert not page.is_visible("#print-earlier")  # the choice itself does not print
        on_screen(page)
        assert page.context.recorder.errors == []
    finally:
        # the reset leaves the print choice and its words alone: back as the HTML gives them
        page.evaluate("() => { document.getElementById('print-earlier').checked = false;"
                      " document.documentElement.classList.remove('print-earlier');"
                      " document.getElementById('print-stamp').textContent = ''; }")
        on_screen(page)
