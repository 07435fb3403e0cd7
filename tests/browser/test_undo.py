"""One page-wide undo and redo over every change to the rig: a burst of typing is one step,
a point picked on the map is one step, Ctrl+Z outside a field undoes, and the check after an
undo is the command line's check of the rig as it was."""

from __future__ import annotations

import pytest
import shakestill as ss  # the core on CPython: the independent reading

from pagekit import BOOT_TIMEOUT_MS, TOUCH_SIZES, assert_same_numbers, cli_check, shot, wait_for_result

pytestmark = pytest.mark.browser


def demo_dict() -> dict:
    return ss.rig_to_dict(ss.demo_rig())


def speed_field(page):
    return page.locator('[data-path="drive.speed_rpm"]')


def test_typing_is_undone_and_redone_and_the_check_follows(demo_page, tmp_path):
    page = demo_page
    first = wait_for_result(page)
    assert page.is_disabled("#undo") and page.is_disabled("#redo")
    original = speed_field(page).input_value()
    old = page.get_attribute("#check-report", "data-result")
    speed_field(page).fill("2900 rpm")  # one burst of typing: one step
    typed = wait_for_result(page, old)
    assert typed["speed_rpm"] == pytest.approx(2900.0, rel=1e-12)
    assert page.is_enabled("#undo")

    # The result being replaced is read before the action: the engine may answer before the
    # next line of the test runs, and a later read would wait for a change already made.
    before_undo = page.get_attribute("#check-report", "data-result")
    page.click("#undo")
    assert speed_field(page).input_value() == original
    undone = wait_for_result(page, before_undo)
    # Independent value: the command line's check of the demo rig as it was (1e-9 relative).
    assert_same_numbers(undone, cli_check(demo_dict(), tmp_path))
    assert undone["speed_rpm"] == first["speed_rpm"]
    assert page.is_enabled("#redo")

    page.locator("body").click(position={"x": 5, "y": 5})  # outside any field
    before_redo = page.get_attribute("#check-report", "data-result")
    page.keyboard.press("Control+Shift+Z")
    assert speed_field(page).input_value() == "2900 rpm"
    redone = wait_for_result(page, before_redo)
    rig = demo_dict()
    rig["drive"]["speed_rpm"] = "2900 rpm"
    assert_same_numbers(redone, cli_check(rig, tmp_path))

    page.keyboard.press("Control+Z")
    assert speed_field(page).input_value() == original
    shot(page, "laptop-after-undo")


def test_a_replaced_rig_and_a_picked_point_are_one_step_each(demo_page):
    page = demo_page
    title = page.locator('[data-path="title"]').input_value()
    stroke = page.locator('[data-path="drive.stroke_m"]').input_value()
    speed = speed_field(page).input_value()
    # A picked point types speed and stroke together (panels/rig-form.js typeOperatingPoint):
    # the same call the map makes on a click.
    page.evaluate("""() => {
      for (const [path, text] of [["drive.speed_rpm", "3000 rpm"], ["drive.stroke_m", "20 mm"]]) {
        const input = document.querySelector(`[data-path="${path}"]`);
        input.value = text;
        input.dispatchEvent(new Event("input", { bubbles: true }));
      }
    }""")
    page.click("#undo")
    assert speed_field(page).input_value() == speed
    assert page.locator('[data-path="drive.stroke_m"]').input_value() == stroke
    # Typing a new title and then undoing twice goes back through both steps.
    page.locator('[data-path="title"]').fill("Bench rig B")
    page.wait_for_timeout(1100)  # a pause in typing ends the step
    speed_field(page).fill("2500 rpm")
    page.click("#undo")
    assert speed_field(page).input_value() == speed
    assert page.locator('[data-path="title"]').input_value() == "Bench rig B"
    page.click("#undo")
    assert page.locator('[data-path="title"]').input_value() == title


@pytest.mark.parametrize("size", ["desktop", "tablet", "phone"])
def test_the_panels_inputs_and_a_pasted_log_come_back_after_a_reload(booted, size):
    page = booted(**TOUCH_SIZES.get(size, {}))  # it reloads the page itself; the next reset
    # finds the engine up again (desktop: the laptop viewport)
    # Nothing the user typed is lost: the run-up rate, the motion angle and ramp choice, the
    # fit's options and a pasted log are as they were after the page is reloaded.
    log = "t_s,angle_deg\n0.00,20.0\n0.01,19.9\n0.02,19.7\n"
    page.fill("#runup-rate", "35")
    page.fill("#motion-angle", "12")
    page.select_option("#motion-slow", index=0)
    slow = page.input_value("#motion-slow")
    page.fill("#fit-log", log)
    page.check('input[name="fit-what"][value="friction"]')
    page.check('input[name="fit-zero"][value="inverted"]')
    page.wait_for_timeout(600)  # the inputs are kept after a pause in typing
    page.reload()
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    assert page.input_value("#runup-rate") == "35"
    assert page.input_value("#motion-angle") == "12"
    assert page.input_value("#motion-slow") == slow
    assert page.input_value("#fit-log") == log
    assert page.is_checked('input[name="fit-what"][value="friction"]')
    assert page.is_checked('input[name="fit-zero"][value="inverted"]')
    assert not page.is_checked('input[name="fit-zero"][value="hanging"]')
