"""The page's main job in headless Chromium: the check of the rig on the sheet,
following edits, agrees with the command line's `shakestill check --json` for
the same rig; bad values are told beside their field in the validator's words."""

from __future__ import annotations

import json
from urllib.parse import urlsplit

import pytest
import shakestill as ss  # the core on CPython: the independent reading

from pagekit import (TABLET_LANDSCAPE, TABLET_PORTRAIT, assert_same_numbers, cli_check,
                     open_page, shot, wait_for_result, wait_for_rig, wait_for_stale)

pytestmark = pytest.mark.browser


def demo_dict() -> dict:
    return ss.rig_to_dict(ss.demo_rig())


def test_demo_check_appears_and_matches_cli(demo_page, tmp_path):
    page = demo_page
    result = wait_for_result(page)
    # Independent value: the command line on the same (demo) rig, 1e-9 relative.
    assert_same_numbers(result, cli_check(demo_dict(), tmp_path))
    for name in ("inverted", "hanging"):
        card = page.locator(f".eq-card[data-eq={name}]")
        word = "is-stable" if result[name]["stable"] else "is-unstable"
        assert word in card.get_attribute("class")
    shot(page, "laptop-demo")


@pytest.mark.parametrize("viewport,name", [(TABLET_PORTRAIT, "tablet-portrait"),
                                           (TABLET_LANDSCAPE, "tablet-landscape")])
def test_tablet_layouts_fit_the_width(new_context, server, viewport, name):
    page = new_context(viewport=viewport, has_touch=True, is_mobile=True).new_page()
    open_page(page, server.url)
    shot(page, f"{name}-demo")
    # Nothing may scroll sideways on a tablet: page width equals the viewport (CSS px).
    width = page.evaluate("document.documentElement.scrollWidth")
    assert width == viewport["width"]


def test_stroke_edit_updates_and_matches_cli(demo_page, tmp_path):
    page = demo_page
    before = wait_for_result(page)
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="drive.stroke_m"]', "25 mm")
    after = wait_for_result(page, old)
    rig = demo_dict()
    rig["drive"]["stroke_m"] = "25 mm"
    assert_same_numbers(after, cli_check(rig, tmp_path))
    # The demo's stroke is not 25 mm, so the peak acceleration must have moved.
    assert after["peak_accel_m_s2"] != pytest.approx(before["peak_accel_m_s2"], rel=1e-6)
    # The core read "25 mm" as 0.025 m (units.py), shown in the verdict's rig.
    assert json.loads(page.get_attribute("#check-report", "data-rig"))["drive"]["stroke_m"] == \
        pytest.approx(0.025, rel=1e-12)
    shot(page, "laptop-stroke-25mm")


def test_fast_typing_ends_on_the_last_text(demo_page, tmp_path):
    """Each keystroke supersedes the computation before it; the verdict must end on the final text."""
    page = demo_page
    wait_for_result(page)
    old = page.get_attribute("#check-report", "data-result")
    field = page.locator('[data-path="drive.speed_rpm"]')
    field.fill("")
    field.press_sequentially("3100 rpm", delay=40)  # "3", "31", ... each a valid speed on the way
    result = wait_for_result(page, old)
    page.wait_for_timeout(1500)  # any late reply of a superseded request would land here
    result = wait_for_result(page, None)
    rig = demo_dict()
    rig["drive"]["speed_rpm"] = "3100 rpm"
    assert_same_numbers(result, cli_check(rig, tmp_path))
    assert result["speed_rpm"] == 3100


def test_bad_value_is_told_beside_its_field_and_old_result_kept(demo_page, tmp_path):
    page = demo_page
    wait_for_result(page)
    good = page.get_attribute("#check-report", "data-result")
    field = page.locator('[data-path="drive.stroke_m"]')
    field.fill("25 parsecs")
    wait_for_stale(page)
    rig = demo_dict()
    rig["drive"]["stroke_m"] = "25 parsecs"
    # The validator's own words (the CLI prints the same problem list).
    with pytest.raises(ss.RigError) as caught:
        ss.rig_from_dict(rig)
    words = [p.message for p in caught.value.problems if p.path == "drive.stroke_m"]
    assert len(words) == 1
    message_id = "m-drive-stroke_m"
    assert message_id in field.get_attribute("aria-describedby").split()
    assert words[0] in page.locator(f"#{message_id}").inner_text()
    assert field.get_attribute("aria-invalid") == "true"
    # The last good result stays, marked stale.
    assert page.get_attribute("#check-report", "data-result") == good
    shot(page, "laptop-bad-stroke")
    # No alert box: the page never called window.alert (no dialog event fired).
    dialogs = []
    heard = lambda d: dialogs.append(d.message)  # noqa: E731
    page.on("dialog", heard)
    field.fill("20 mm")
    wait_for_result(page, None)
    page.remove_listener("dialog", heard)  # the page goes on to other modules' tests
    assert dialogs == []
    assert page.locator(f"#{message_id}").is_hidden()


def test_no_request_leaves_the_site(context, server):
    page = context.new_page()
    open_page(page, server.url)
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="drive.speed_rpm"]', "40 Hz")
    wait_for_result(page, old)
    page.click("#copy-link")
    page.wait_for_function("() => document.getElementById('share-box').value.includes('#')")
    urls = context.recorder.urls
    # The page fetched its own files (the engine's wasm among them) ...
    assert any(u.endswith(".wasm") for u in urls), urls
    # ... and nothing from any other origin.
    foreign = [u for u in urls if not u.startswith(("data:", "blob:"))
               and f"{urlsplit(u).scheme}://{urlsplit(u).netloc}" != server.origin]
    assert foreign == []
    assert context.recorder.errors == []


def test_autosave_keeps_invalid_text_over_a_reload(demo_page):
    page = demo_page
    wait_for_result(page)
    page.fill('[data-path="links[0].length_m"]', "30 cm and a bit")
    wait_for_stale(page)
    page.reload()
    wait_for_stale(page)
    assert page.input_value('[data-path="links[0].length_m"]') == "30 cm and a bit"


def test_added_link_by_keyboard_matches_cli(demo_page, tmp_path):
    page = demo_page
    wait_for_result(page)
    old = page.get_attribute("#check-report", "data-result")
    page.focus('button[data-action="add-link"]')
    page.keyboard.press("Enter")
    # Focus moves to the new link's first field.
    assert page.evaluate("document.activeElement.dataset.path") == "links[1].length_m"
    result = wait_for_result(page, old)
    rig = demo_dict()
    rig["links"].append(json.loads(json.dumps(rig["links"][0])))
    assert_same_numbers(result, cli_check(rig, tmp_path))


def test_saved_file_is_the_validated_rig_and_opens_again(demo_page, tmp_path):
    page = demo_page
    wait_for_result(page)
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="title"]', "Shaker table B")
    page.fill('[data-path="drive.speed_rpm"]', "2700 rpm")
    wait_for_result(page, old)
    with page.expect_download() as info:
        page.click("#save-file")
    saved = json.loads(open(info.value.path()).read())
    want = demo_dict()
    want["title"] = "Shaker table B"
    want["drive"]["speed_rpm"] = "2700 rpm"
    # The file is the rig as the core normalises it (rig_to_dict of the validated rig).
    assert saved == ss.rig_to_dict(ss.rig_from_dict(want))
    assert info.value.suggested_filename == "shaker-table-b.rig.json"

    # A file that is not JSON is refused and the rig stays.
    bad = tmp_path / "notes.json"
    bad.write_text("stroke 20 mm")
    page.set_input_files("#open-file", str(bad))
    page.wait_for_selector("#notice:not([hidden])")
    assert "not valid JSON" in page.inner_text("#notice-text")
    assert page.input_value('[data-path="title"]') == "Shaker table B"

    # The saved file opens back into the sheet with the same check.
    current = page.get_attribute("#check-report", "data-result")
    saved_path = tmp_path / "back.rig.json"
    saved["title"] = "Shaker table B, reopened"
    saved_path.write_text(json.dumps(saved))
    page.set_input_files("#open-file", str(saved_path))
    result = wait_for_rig(page, "reopened")
    want = json.loads(current)
    want["title"] = "Shaker table B, reopened"
    assert_same_numbers(result, want)


def blocked_start(context, server, pattern: str, timeout: int):
    """Open the page with one file blocked (as behind a filtering proxy); the failure's words."""
    context.route(pattern, lambda route: route.abort("blockedbyclient"))
    page = context.new_page()
    page.goto(server.url)
    page.wait_for_selector("#boot-failed:not([hidden])", timeout=timeout)
    return page, page.inner_text("#boot-failed-reason")


def test_failed_start_says_why_in_words(context, server):
    page, reason = blocked_start(context, server, "**/build-info.json", 120_000)
    assert reason.startswith("Could not"), reason  # the worker names the step that failed
    assert page.inner_text("#boot-failed-advice") != ""
    assert page.get_attribute("#chip-engine", "data-state") == "failed"
    # A first visit still gets a blank sheet to type into, autosaved while the engine is down.
    page.fill('[data-path="links[0].length_m"]', "310 mm")
    saved = page.evaluate("() => JSON.parse(localStorage.getItem('shakestill.autosave.v1')).draft")
    assert saved["links"][0]["length_m"] == "310 mm"
    shot(page, "laptop-engine-failed")


def test_missing_python_wasm_fails_fast_in_words(context, server):
    # Pyodide's loader never settles when its WebAssembly cannot be fetched; the worker looks first.
    # Well under the page's one-minute stall watch: the start must fail, not stall.
    page, reason = blocked_start(context, server, "**/pyodide.asm.wasm", 30_000)
    assert reason.startswith("Could not download Python"), reason
    assert page.get_attribute("#chip-engine", "data-state") == "failed"


def test_a_bad_value_turns_the_strip_neutral_and_names_the_field(demo_page):
    # While an input is invalid no verdict looks current: the strip's verdict words lose their
    # stable/unstable colours, the strip names the field in the validator's words, and its
    # button puts the cursor in that field.
    page = demo_page
    wait_for_result(page)
    ok_colour = page.evaluate("getComputedStyle(document.querySelector("
                              "'.strip-item[data-eq=inverted] .strip-word')).color")
    page.fill('[data-path="drive.speed_rpm"]', "fast")
    wait_for_stale(page)
    data = demo_dict()
    data["drive"]["speed_rpm"] = "fast"
    with pytest.raises(ss.RigError) as caught:
        ss.rig_from_dict(data)
    words = next(p.message for p in caught.value.problems if p.path == "drive.speed_rpm")
    strip = page.locator("#verdict-strip .strip-stale")
    assert words in strip.inner_text() and "speed" in strip.inner_text()  # "Drive, speed"
    neutral = page.evaluate("getComputedStyle(document.querySelector("
                            "'.strip-item[data-eq=inverted] .strip-word')).color")
    assert neutral != ok_colour
    page.locator("body").click(position={"x": 5, "y": 5})
    page.click("#verdict-strip .strip-fix")
    assert page.evaluate("document.activeElement.dataset.path") == "drive.speed_rpm"
    shot(page, "laptop-strip-names-the-field")
