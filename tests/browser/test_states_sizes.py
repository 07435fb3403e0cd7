"""Honest states on a tablet held upright (touch) and on a phone, as test_page.py,
test_undo.py and test_share.py check them at desktop size.

A bad value turns the verdict strip neutral and names the field in the validator's own words
(the core's RigError on CPython), and the strip's button puts the cursor in that field, the
rig sheet's drawer opened for it (test_undo.py checks the panels' inputs after a reload at
the three sizes); a share link's rig is in the sheet before the engine has started, with the
sender's result for that rig marked as the sender's until the engine's own replaces it (the
same numbers: the core on CPython, 1e-9 relative).
"""

from __future__ import annotations

import json

import pytest
import shakestill as ss


from pagekit import (BOOT_TIMEOUT_MS, TOUCH_SIZES as SIZES, assert_same_numbers, close_sheet,
                     make_link, open_sheet, shot, wait_for_result, wait_for_stale)

pytestmark = pytest.mark.browser



@pytest.mark.parametrize("size", sorted(SIZES))
def test_a_bad_value_is_named_in_the_strip_and_its_button_finds_the_field(booted, size):
    page = booted(**SIZES[size])  # a booted page at this size, reset (conftest.BootedPages)
    wait_for_result(page)
    ok_colour = page.evaluate("getComputedStyle(document.querySelector("
                              "'.strip-item[data-eq=inverted] .strip-word')).color")
    open_sheet(page)
    page.fill('[data-path="drive.speed_rpm"]', "fast")
    wait_for_stale(page)
    close_sheet(page)
    data = ss.demo_rig_dict()
    data["drive"]["speed_rpm"] = "fast"
    with pytest.raises(ss.RigError) as caught:
        ss.rig_from_dict(data)
    words = next(p.message for p in caught.value.problems if p.path == "drive.speed_rpm")
    strip = page.locator("#verdict-strip .strip-stale")
    assert words in strip.inner_text()
    assert page.evaluate("getComputedStyle(document.querySelector("
                         "'.strip-item[data-eq=inverted] .strip-word')).color") != ok_colour
    page.locator("#verdict-strip .strip-fix").tap()
    assert page.evaluate("document.activeElement.dataset.path") == "drive.speed_rpm"
    assert page.locator('[data-path="drive.speed_rpm"]').is_visible()
    shot(page, f"{size}-strip-names-the-field", full_page=False)


@pytest.mark.parametrize("size", sorted(SIZES))
def test_a_links_rig_and_the_senders_result_show_before_the_engine(booted, new_context, size):
    # The sender: the demo rig with a speed of its own on a booted page of this size, its
    # link made by a tap; the receiver boots cold (the states before its engine has started).
    sender = booted(**SIZES[size])
    old = sender.get_attribute("#check-report", "data-result")
    open_sheet(sender)
    sender.fill('[data-path="drive.speed_rpm"]', "2650 rpm")
    sent = wait_for_result(sender, old)
    close_sheet(sender)
    link = make_link(sender, tap=True)
    page = new_context(**SIZES[size]).new_page()
    page.goto(link)
    page.wait_for_function("() => document.getElementById('rig-sheet').dataset.preview === 'link'",
                           timeout=10_000)
    assert page.get_attribute("#chip-engine", "data-state") != "ready"
    assert page.input_value('[data-path="drive.speed_rpm"]') == "2650 rpm"
    if page.get_attribute("#check-report", "data-state") == "cached":
        assert page.get_attribute("#check-report", "data-source") == "link"
        assert json.loads(page.get_attribute("#check-report", "data-result")) == sent
    fresh = wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    data = ss.demo_rig_dict()
    data["drive"]["speed_rpm"] = 2650.0
    want = json.loads(json.dumps(ss.check(ss.rig_from_dict(data))))  # the core on CPython
    assert_same_numbers(fresh, want, rel=1e-9, where=f"{size} link's rig")
    shot(page, f"{size}-link-opened", full_page=False)


@pytest.mark.parametrize("size", sorted(SIZES))
def test_dark_mode_follows_the_system_at_every_size(booted, size):
    # As test_access.py at desktop size: with the system set to dark (prefers-color-scheme) the
    # paper is dark and every text keeps WCAG 2.2's contrast (SC 1.4.3 / 1.4.11), also with a
    # field in error and the strip neutral.
    from test_access import failures, luminance
    page = booted(color_scheme="dark", **SIZES[size])
    wait_for_result(page)
    background = page.evaluate("getComputedStyle(document.body).backgroundColor")
    assert luminance([float(v) for v in background[4:-1].split(",")[:3]]) < 0.05
    assert failures(page) == []
    open_sheet(page)
    page.fill('[data-path="drive.stroke_m"]', "-4 mm")
    wait_for_stale(page)
    assert failures(page) == []
    close_sheet(page)
    assert failures(page) == []
    shot(page, f"{size}-dark-strip-neutral", full_page=False)
