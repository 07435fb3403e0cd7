"""The motion panel in headless Chromium: the animation, slow motion, the
stroboscopic view, the knock, bad input, knock tolerance, the recovery map,
loads, a rig edit stopping the work, touch sizes, print and screenshots.

One page of the demo rig is opened for the module and its first run made;
the tests then run in file order on it. Independent values: the core on
CPython (shakestill.bridge.call, the same request the page sent, read from the
page's data attributes) and the command line (`shakestill simulate/tolerance/
loads --json`) on the same rig, in a subprocess as pagekit does for `check`.
"""

from __future__ import annotations

import json
import math
import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest
from shakestill import bridge
from shakestill.model.units import allowed_units

from pagekit import (ARTIFACTS, BOOT_TIMEOUT_MS, LAPTOP, RESULT_TIMEOUT_MS, TABLET_PORTRAIT, open_page,
                     shot, wait_for_result, wait_for_rig)

pytestmark = pytest.mark.browser

ANIM = "#motion-anim"
LONG_MS = 300_000  # the tolerance search and the map: tens of seconds of engine time in Pyodide
PX_TOL = 1.0  # drawn positions: within one pixel (SVG user units, drawn at about 1:1)


@pytest.fixture(scope="module")
def motion_page(browser, server):
    """The demo rig's page with its first motion run on show."""
    context = browser.new_context(viewport=LAPTOP)
    page = context.new_page()
    page.errors = []
    page.on("pageerror", lambda err: page.errors.append(str(err)))
    open_page(page, server.url)
    page.click("#motion-run")
    wait_for_run(page)
    yield page
    context.close()


def wait_for_run(page, previous: str | None = None, timeout: int = RESULT_TIMEOUT_MS) -> dict:
    """Wait for a fresh run whose request differs from `previous`; return that request."""
    page.wait_for_function("""(previous) => {
        const el = document.querySelector("#motion-anim");
        return el.dataset.state === "fresh" && el.dataset.request !== previous
            && document.getElementById("motion-cancel").hidden;
    }""", arg=previous, timeout=timeout)
    return json.loads(page.get_attribute(ANIM, "data-request"))


def data(page, selector: str, name: str):
    return json.loads(page.get_attribute(selector, f"data-{name}"))


def rig_of(page) -> dict:
    """The rig as the core read it (SI), from the verdict."""
    return data(page, "#check-report", "rig")


def core_run(page) -> dict:
    """The page's last simulate request, run by the core on CPython."""
    reply = bridge.call({"op": "simulate", "rig": rig_of(page), **data(page, ANIM, "request")})
    assert reply["ok"], reply
    return reply


def set_frame(page, k: int) -> float:
    """Move the time slider (it steps through the frames) as a user would; returns the time on show."""
    page.evaluate("""(k) => { const el = document.getElementById("motion-time");
        el.value = String(k); el.dispatchEvent(new Event("input", {bubbles: true})); }""", k)
    return float(page.get_attribute(ANIM, "data-time"))


def drawn(page) -> dict:
    """The tip, pivot joint and carriage as drawn (SVG user units), and the scale the view reports."""
    return page.evaluate("""() => {
        const svg = document.querySelector("#motion-anim svg");
        const num = (el, a) => Number(el.getAttribute(a));
        const tip = svg.querySelector(".anim-tip"), joint = svg.querySelector(".anim-joint");
        const car = svg.querySelector(".anim-carriage");
        return {tip: [num(tip, "cx"), num(tip, "cy")], joint: [num(joint, "cx"), num(joint, "cy")],
                carriage_cy: num(car, "y") + num(car, "height") / 2,
                scale: JSON.parse(document.querySelector("#motion-anim").dataset.scale)};
    }""")


def to_px(scale: dict, x: float, y: float) -> tuple[float, float]:
    return scale["x0_px"] + x * scale["px_per_m"], scale["y0_px"] - y * scale["px_per_m"]


def cli(command: str, rig: dict, tmp_path: Path, *args: str) -> dict:
    """`shakestill COMMAND rig.json --json ARGS` as the command line gives it."""
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(rig))
    exe = shutil.which("shakestill", path=str(Path(sys.executable).parent)) or shutil.which("shakestill")
    base = [exe] if exe else [sys.executable, "-m", "shakestill.cli"]
    done = subprocess.run([*base, command, str(path), "--json", *args], capture_output=True, text=True,
                          timeout=600)
    assert done.returncode in (0, 1), done.stderr
    return json.loads(done.stdout)


def fmt4(value: float) -> str:
    """The page's number format (4 significant figures, no trailing zeros)."""
    return f"{float(f'{value:.4g}'):.6g}"


# ---------------------------------------------------------------- the animation


def test_animation_draws_the_core_frames_to_scale(motion_page):
    page = motion_page
    assert page.errors == []
    ref = core_run(page)  # the same request on CPython
    frames = ref["frames"]
    rig = rig_of(page)
    length = rig["links"][0]["length_m"]
    for k in (0, 137, len(frames["t_s"]) // 2, len(frames["t_s"]) - 1):
        shown = set_frame(page, k)
        assert shown == pytest.approx(frames["t_s"][k], abs=1e-12)
        d = drawn(page)
        s = d["scale"]
        # the tip as drawn = the core's frame (x_m, y_m) through the scale the view reports, within 1 px
        want = to_px(s, frames["x_m"][k][-1], frames["y_m"][k][-1])
        assert abs(d["tip"][0] - want[0]) <= PX_TOL and abs(d["tip"][1] - want[1]) <= PX_TOL, (k, d, want)
        # the pivot joint and the carriage ride at the core's pivot height
        pivot = to_px(s, 0.0, frames["pivot_y_m"][k])
        assert abs(d["joint"][1] - pivot[1]) <= PX_TOL and abs(d["carriage_cy"] - pivot[1]) <= PX_TOL
        # to scale: the drawn link is the rig file's length (0.25 m) at the reported px per metre
        drawn_len = math.dist(d["tip"], d["joint"])
        assert abs(drawn_len - length * s["px_per_m"]) <= PX_TOL, (drawn_len, length * s["px_per_m"])
    assert page.get_attribute(ANIM, "data-source") == "frames"


def test_strobe_view_draws_the_once_per_cycle_samples(motion_page):
    page = motion_page
    ref = core_run(page)
    strobe = ref["strobe"]
    page.check("#motion-strobe")
    try:
        shown = set_frame(page, 1091)  # between two samples
        k = max(i for i, t in enumerate(strobe["t_s"]) if t <= shown)
        d = drawn(page)
        want = to_px(d["scale"], strobe["x_m"][k][-1], strobe["y_m"][k][-1])
        assert page.get_attribute(ANIM, "data-source") == "strobe"
        assert float(page.get_attribute(ANIM, "data-frame")) == k
        assert abs(d["tip"][0] - want[0]) <= PX_TOL and abs(d["tip"][1] - want[1]) <= PX_TOL
        assert f"sample at {strobe['t_s'][k]:.3f} s" in page.inner_text("#motion-clock")
    finally:
        page.uncheck("#motion-strobe")
    # the once-per-cycle plot: its line goes through the core's samples, mapped by the plot's axes
    points = page.evaluate("""() => document.querySelector('#motion-plot svg.strobe-plot polyline')
        .getAttribute('points').trim().split(/\\s+/).map((p) => p.split(',').map(Number))""")
    ax = ref["strobe_axes"]
    assert len(points) == len(strobe["t_s"])
    for i in (0, 50, len(points) - 1):
        px = ax["x"]["px_min"] + (strobe["t_s"][i] - ax["x"]["min"]) / (ax["x"]["max"] - ax["x"]["min"]) * (
            ax["x"]["px_max"] - ax["x"]["px_min"])
        deg = math.degrees(strobe["angles_rad"][i][0])
        py = ax["y"]["px_min"] + (deg - ax["y"]["min"]) / (ax["y"]["max"] - ax["y"]["min"]) * (
            ax["y"]["px_max"] - ax["y"]["px_min"])
        assert points[i] == pytest.approx([px, py], abs=0.01)  # the SVG rounds to 0.01 px
    # The sample positions are the frames' positions at the same instants: a run whose frames
    # fall once per drive cycle (frame rate = drive frequency, from the check) gives them again.
    f_hz = data(page, "#check-report", "result")["frequency_hz"]
    request = {**data(page, ANIM, "request"), "duration_s": "1 s", "frame_rate_hz": f_hz}
    again = bridge.call({"op": "simulate", "rig": rig_of(page), **request})
    n = min(len(again["frames"]["t_s"]), len(again["strobe"]["t_s"]))
    assert n > 40
    for i in range(n):
        assert again["frames"]["t_s"][i] == pytest.approx(again["strobe"]["t_s"][i], abs=1e-12)
        for key in ("x_m", "y_m"):  # dense output and the located sample: well within 1e-9 m
            assert again["strobe"][key][i] == pytest.approx(again["frames"][key][i], abs=1e-9)
        assert again["strobe"]["pivot_y_m"] == pytest.approx(again["frames"]["pivot_y_m"][i], abs=1e-12)


def test_play_runs_slowed_by_the_chosen_factor_and_by_keyboard(motion_page):
    page = motion_page
    page.select_option("#motion-slow", "100")
    set_frame(page, 0)
    page.focus("#motion-play")
    start = time.monotonic()
    page.keyboard.press("Space")  # keyboard: the play button toggles
    page.wait_for_function("() => document.querySelector('#motion-anim').dataset.playing === 'true'")
    page.wait_for_timeout(1500)
    page.keyboard.press("Space")
    wall = time.monotonic() - start
    assert page.get_attribute(ANIM, "data-playing") == "false"
    shown = float(page.get_attribute(ANIM, "data-time"))
    # Play can never run ahead of wall-clock time / 100 (the page's clock runs inside Python's
    # interval); it advances by the wall time of each screen frame, so at least half of it shows
    # even if some frames are skipped on a busy machine.
    assert 0.5 * 1.5 / 100 <= shown <= wall / 100, (shown, wall)
    assert page.get_attribute("#motion-play", "aria-pressed") == "false"


def test_knock_reruns_from_the_time_on_show(motion_page, tmp_path):
    page = motion_page
    before = page.get_attribute(ANIM, "data-request")
    page.fill("#motion-knock", "3")
    shown = set_frame(page, 1080)
    page.click("#motion-knock-go")
    request = wait_for_run(page, before)
    # the reply's run includes the knock at the time that was on show
    assert request["knocks"] == [{"t_s": round(shown, 4), "rate_rad_s": "3 rad/s", "link": 1}]
    events = data(page, ANIM, "events")
    assert [(e["kind"], e["t_s"]) for e in events if e["kind"] == "knock"] == [("knock", round(shown, 4))]
    # and play goes on from there, not from the start
    page.wait_for_function("() => document.querySelector('#motion-anim').dataset.playing === 'true'")
    page.click("#motion-play")
    assert float(page.get_attribute(ANIM, "data-time")) >= round(shown, 4)
    # The command line with the same knock: the same events and the same end state
    # (the same adaptive DOP853 run at rtol 1e-8 on another libm: angles agree well under 1e-6 rad).
    want = cli("simulate", rig_of(page), tmp_path, "--duration", "5s", "--angle", "10deg",
               "--knock", f"{round(shown, 4)}s:3rad/s", "--fps", "10")
    assert [(e["kind"], e["message"]) for e in events] == [(e["kind"], e["message"]) for e in want["events"]]
    for got, ref in zip(events, want["events"]):
        assert got["t_s"] == pytest.approx(ref["t_s"], abs=1e-6)
    end = data(page, ANIM, "end-angles")
    assert data(page, ANIM, "summary")["end_t_s"] == pytest.approx(want["end_t_s"], abs=1e-12)
    assert end[0] == pytest.approx(want["end_state"][0], abs=1e-6)


def refused(page, button: str, msg: str, *words: str) -> None:
    """Press `button`; the message beside the field must appear and hold every one of `words`."""
    page.click(button)
    page.wait_for_selector(f"{msg}:not([hidden])")
    text = page.inner_text(msg)
    for word in words:
        assert word in text, (word, text)


def refused_and_kept(page, field: str, typed: str, *words: str) -> None:
    """Type into `field` and press Run: its message holds `words`; the text and the run on show stay."""
    request = page.get_attribute(ANIM, "data-request")
    page.fill(field, typed)
    refused(page, "#motion-run", f"{field}-msg", *words)
    assert page.input_value(field) == typed
    assert page.get_attribute(field, "aria-invalid") == "true"
    assert page.get_attribute(ANIM, "data-request") == request


def test_bad_fields_are_named_with_the_value_and_kept(motion_page):
    page = motion_page
    # the field, the value and the allowed units (the core's own list for a time)
    refused_and_kept(page, "#motion-duration", "abc", "Run length", "'abc'", allowed_units("time"))

    page.fill("#motion-duration", "500")
    refused(page, "#motion-run", "#motion-duration-msg", "Run length", '"500"', "at most 120 s")

    page.select_option("#motion-start", "hanging")
    page.fill("#motion-angle", "0.2 rad")
    page.fill("#motion-duration", "5")
    refused(page, "#motion-run", "#motion-angle-msg", "Initial angle", '"0.2 rad"', "degrees")
    assert page.input_value("#motion-angle") == "0.2 rad"

    page.fill("#motion-knock", "fast")
    page.select_option("#motion-start", "inverted")
    page.fill("#motion-angle", "10")
    refused(page, "#motion-knock-go", "#motion-knock-msg", "Knock size", "'fast'", allowed_units("angular_rate"))
    assert page.input_value("#motion-knock") == "fast"
    page.fill("#motion-knock", "2")


# ---------------------------------------------------------------- speed ramps


def ramp_speed(t: float, delay: float, rate: float, start: float, end: float) -> float:
    """A linear ramp from `start` after `delay` at `rate` rpm/s, held at `end` (common practice, no source)."""
    return min(end, max(start, start + rate * (t - delay)))


def set_fields(page, *steps: tuple[str, str]) -> None:
    """Set the panel's fields in this order, as a user would: a select is chosen, a text field typed."""
    for selector, value in steps:
        if page.eval_on_selector(selector, "el => el.tagName") == "SELECT":
            page.select_option(selector, value)
        else:
            page.fill(selector, value)


def test_run_up_from_rest_shows_the_core_speeds(motion_page):
    page = motion_page
    before = page.get_attribute(ANIM, "data-request")
    set_fields(page, ("#motion-start", "hanging"), ("#motion-angle", "10"), ("#motion-speed-mode", "up"),
               ("#motion-ramp-by", "rate"), ("#motion-ramp-from", "0"), ("#motion-ramp-delay", "0.5"),
               ("#motion-ramp-rate", "1000"))
    check_targets_and_labels(page)  # the ramp's fields too: labelled, 44 px
    op = rig_of(page)["drive"]["speed_rpm"]  # 2700 rpm: the rig as the core read it
    ramp_end = 0.5 + op / 1000.0
    # the run length follows the ramp: its end plus 3 s, rounded up to 0.1 s
    length = float(page.input_value("#motion-duration"))
    assert ramp_end + 3 <= length < ramp_end + 3 + 0.1 + 1e-9, length
    page.click("#motion-run")
    request = wait_for_run(page, before)
    assert request["start_rpm"] == "0 rpm" and request["duration_s"] == f"{length:g} s"
    assert [{k: v for k, v in r.items() if k != "to_rpm"} for r in request["ramps"]] == [
        {"at_s": "0.5 s", "rate_rpm_s": "1000 rpm/s"}]
    ref = core_run(page)  # the same request on CPython
    frames = ref["frames"]
    mid = max(i for i, t in enumerate(frames["t_s"]) if t <= (0.5 + ramp_end) / 2)  # half-way up
    for k in (0, 300, mid, len(frames["t_s"]) - 1):
        t = set_frame(page, k)
        shown = float(page.get_attribute(ANIM, "data-speed-rpm"))
        # the speed of the frame on show is the core's (CPython, same request), rel 1e-9
        assert shown == pytest.approx(frames["speed_rpm"][k], rel=1e-9, abs=1e-9), k
        assert page.inner_text("#motion-drive-speed") == f"{fmt4(frames['speed_rpm'][k])} rpm"
        # and the ramp's: 0 rpm until 0.5 s, then 1000 rpm/s up to the rig's speed (rel 1e-9)
        assert shown == pytest.approx(ramp_speed(t, 0.5, 1000.0, 0.0, op), rel=1e-9, abs=1e-9), (k, t)
    # at the end the drive runs at the rig's operating speed (the rig file's 2700 rpm), rel 1e-9
    assert shown == pytest.approx(op, rel=1e-9)
    assert 0 < ramp_speed(frames["t_s"][mid], 0.5, 1000.0, 0.0, op) < op  # mid really is on the ramp

    # the stroboscopic view on the ramp: the sample at or before the time, the speed of the frame on show
    page.check("#motion-strobe")
    try:
        t = set_frame(page, mid)
        samples = ref["strobe"]["t_s"]
        assert page.get_attribute(ANIM, "data-source") == "strobe"
        assert float(page.get_attribute(ANIM, "data-frame")) == max(i for i, s in enumerate(samples) if s <= t)
        assert float(page.get_attribute(ANIM, "data-speed-rpm")) == pytest.approx(frames["speed_rpm"][mid], rel=1e-9)
    finally:
        page.uncheck("#motion-strobe")
    shot(page, "motion-run-up-page")
    ARTIFACTS.mkdir(exist_ok=True)
    page.locator("section.motion").screenshot(path=str(ARTIFACTS / "motion-run-up.png"))

    # a knock on the ramp: the same ramp again with the knock, speeds still the core's
    knocked_at = round(set_frame(page, mid), 4)
    shown_request = page.get_attribute(ANIM, "data-request")
    page.click("#motion-knock-go")
    again = wait_for_run(page, shown_request)
    assert again["ramps"] == request["ramps"] and again["start_rpm"] == "0 rpm"
    assert [k["t_s"] for k in again["knocks"]] == [knocked_at]
    page.wait_for_function("() => document.querySelector('#motion-anim').dataset.playing === 'true'")
    page.click("#motion-play")
    ref = core_run(page)
    k = len(ref["frames"]["t_s"]) * 3 // 4
    t = set_frame(page, k)
    assert t > knocked_at
    shown = float(page.get_attribute(ANIM, "data-speed-rpm"))
    assert shown == pytest.approx(ref["frames"]["speed_rpm"][k], rel=1e-9, abs=1e-9)  # CPython, same request
    assert shown == pytest.approx(ramp_speed(t, 0.5, 1000.0, 0.0, op), rel=1e-9, abs=1e-9)  # the ramp formula
    assert page.errors == []


def test_bad_ramp_fields_are_named_with_the_value_and_kept(motion_page):
    page = motion_page
    request = page.get_attribute(ANIM, "data-request")
    # the field, the value and the allowed units (the core's own list for a rate)
    refused_and_kept(page, "#motion-ramp-rate", "fast", "Ramp rate", "'fast'", allowed_units("rate"))

    page.select_option("#motion-ramp-by", "time")
    page.fill("#motion-ramp-time", "-2")
    page.fill("#motion-ramp-delay", "-1")
    refused(page, "#motion-run", "#motion-ramp-time-msg", "Ramp time", "'-2 s'", "above 0")
    assert "at least 0" in page.inner_text("#motion-ramp-delay-msg")
    assert "Delay before the ramp: '-1 s'" in page.inner_text("#motion-ramp-delay-msg")
    assert page.input_value("#motion-ramp-time") == "-2" and page.input_value("#motion-ramp-delay") == "-1"
    page.select_option("#motion-ramp-by", "rate")
    assert page.input_value("#motion-ramp-rate") == "fast"  # switching how the ramp is set loses nothing
    assert page.get_attribute(ANIM, "data-request") == request

    # back to the rig's own speed for the tests after: the run length goes back to its default
    set_fields(page, ("#motion-ramp-rate", "500"), ("#motion-ramp-by", "time"), ("#motion-ramp-time", "5"),
               ("#motion-ramp-delay", "0"), ("#motion-speed-mode", "constant"), ("#motion-start", "inverted"))
    assert page.input_value("#motion-duration") == "5"
    assert not page.is_visible("#motion-ramp")


# ---------------------------------------------------------------- tolerance and the map


def test_tolerance_numbers_equal_the_command_line(motion_page, tmp_path):
    page = motion_page
    page.click("#tolerance-go")
    page.wait_for_function("() => document.getElementById('tolerance-result').dataset.state === 'fresh'",
                           timeout=LONG_MS)
    got = data(page, "#tolerance-result", "result")
    want = cli("tolerance", rig_of(page), tmp_path)
    for key in ("max_knock_rad_s", "max_release_angle_rad"):
        assert got[key] == pytest.approx(want[key], rel=1e-9), key
    for key in ("knock_rad_s", "release_angle_rad"):
        assert got["estimates"][key] == pytest.approx(want["estimates"][key], rel=1e-9), key
    # what the table shows: the simulated value and, labelled as such, the estimate
    cells = page.locator("#tolerance-result tr[data-key='knock'] td").all_inner_texts()
    assert cells[0] == f"{fmt4(want['max_knock_rad_s'])} rad/s"
    assert cells[1] == f"{fmt4(want['estimates']['knock_rad_s'])} rad/s (estimate)"
    release = page.locator("#tolerance-result tr[data-key='release'] td").all_inner_texts()
    assert release[0] == f"{fmt4(want['max_release_angle_deg'])}° ({fmt4(want['max_release_angle_rad'])} rad)"
    assert "Estimate (Kapitza" in page.inner_text("#tolerance-result thead")


def test_recovery_map_shows_progress_cancels_and_equals_the_core(motion_page):
    page = motion_page
    page.select_option("#basin-size", "61")  # slow enough to cancel half-way
    page.click("#basin-go")
    page.wait_for_function("""() => document.getElementById('tolerance-progress').value > 0
        && document.querySelector('#basin-map svg') !== null""", timeout=LONG_MS)
    assert page.is_visible("#tolerance-cancel")
    page.click("#tolerance-cancel")
    page.wait_for_selector("#tolerance-cancel", state="hidden")
    assert page.get_attribute("#basin-map", "data-state") == "cancelled"
    assert page.inner_text("#tolerance-status").startswith("Cancelled")

    page.select_option("#basin-size", "21")
    page.click("#basin-go")
    page.wait_for_function("() => document.getElementById('basin-map').dataset.state === 'done'",
                           timeout=LONG_MS)
    tol = data(page, "#tolerance-result", "result")
    # the core on CPython, the same job: the same recovered cells
    rig = rig_of(page)
    job = bridge.call({"op": "motion_job_start", "kind": "basin", "rig": rig, "size": 21,
                       "knock_rad_s": tol["max_knock_rad_s"], "release_rad": tol["max_release_angle_rad"]})
    while not (step := bridge.call({"op": "motion_job_step", "job": job["job"], "budget_ms": 2000}))["done"]:
        pass
    assert data(page, "#basin-map", "recovered") == step["basin"]["recovered"]
    assert data(page, "#basin-map", "axes") == step["axes"]


# ---------------------------------------------------------------- loads


def loads_shown(page) -> dict:
    return page.evaluate("""() => Object.fromEntries([...document.querySelectorAll(
        '#loads-result tr[data-key]')].map((tr) => [tr.dataset.key,
        Number(tr.querySelector('td').dataset.value)]))""")


def test_loads_table_equals_the_command_line(motion_page, tmp_path):
    page = motion_page
    page.click("#loads-go")
    page.wait_for_function("() => document.getElementById('loads-result').dataset.state === 'fresh'")
    want = cli("loads", rig_of(page), tmp_path)
    got = loads_shown(page)
    expected = {"drive_force_peak": want["drive_force_N"]["peak"], "drive_force_rms": want["drive_force_N"]["rms"],
                "power_peak": want["power_W"]["peak"], "power_rms": want["power_W"]["rms"],
                "accel_peak": want["peak_accel_m_s2"],
                "link1_tension": want["links"][0]["max_tension_N"],
                "link1_compression": want["links"][0]["max_compression_N"]}
    assert set(got) == set(expected)
    for key, value in expected.items():  # one cycle at rest: the same sums, rel 1e-9
        assert got[key] == pytest.approx(value, rel=1e-9), key
    assert page.locator("#loads-result .load-flags").inner_text().startswith("No limits are given")
    assert page.locator("#loads-result .safety-pointer a[href='#safety-h']").count() == 1


def test_rig_edit_stops_running_motion_work(motion_page):
    page = motion_page
    if page.get_attribute("#loads-result", "data-state") != "fresh":  # run alone: loads first
        page.click("#loads-go")
        page.wait_for_function("() => document.getElementById('loads-result').dataset.state === 'fresh'")
    page.click("#tolerance-go")
    page.wait_for_selector("#tolerance-cancel", state="visible")
    speed = page.locator('#rig-sheet [data-path="drive.speed_rpm"]')
    before = page.get_attribute("#check-report", "data-result")
    speed.fill("2600 rpm")
    page.wait_for_selector("#tolerance-cancel", state="hidden")
    assert "rig changed" in page.inner_text("#tolerance-status")
    stopped_at = page.eval_on_selector("#tolerance-progress", "el => el.value")
    wait_for_result(page, before)  # the check of the edited rig still comes
    page.wait_for_timeout(1000)
    assert page.eval_on_selector("#tolerance-progress", "el => el.value") == stopped_at
    assert page.get_attribute(ANIM, "data-state") == "stale"
    assert page.get_attribute("#loads-result", "data-state") == "stale"
    edited_text = page.get_attribute("#check-report", "data-result")  # read before the edit
    speed.fill("2700 rpm")
    wait_for_result(page, edited_text)


# ---------------------------------------------------------------- touch, labels, print, screenshots


def check_targets_and_labels(page):
    """Every control of the panel has a label and a touch target of at least 44 px."""
    found = page.evaluate("""() => [...document.querySelectorAll(
        'section.motion button, section.motion input, section.motion select')]
        .filter((el) => el.offsetParent !== null)
        .map((el) => { const target = el.type === "checkbox" ? el.closest("label") : el;
            const r = target.getBoundingClientRect();
            return {id: el.id, h: r.height, w: r.width,
                    labelled: el.tagName === "BUTTON" ? el.textContent.trim() !== "" : el.labels.length > 0}; })""")
    assert found
    for c in found:
        assert c["h"] >= 44 and c["w"] >= 44, c
        assert c["labelled"], c


def test_flags_lead_the_loads_when_a_limit_is_exceeded(new_context, server, tmp_path):
    page = new_context(viewport=TABLET_PORTRAIT, has_touch=True).new_page()
    page.goto(server.url)
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    rig = rig_of(page)
    rig["title"] = "Demo with drive limits"
    rig["limits"].update({"max_force_N": 50.0, "max_power_W": 200.0, "max_accel_m_s2": 900.0})
    path = tmp_path / "limits.json"
    path.write_text(json.dumps(rig))
    page.set_input_files("#open-file", str(path))
    wait_for_rig(page, "Demo with drive limits")
    page.tap("#loads-go")
    page.wait_for_function("() => document.getElementById('loads-result').dataset.state === 'fresh'")
    want = cli("loads", rig, tmp_path)
    exceeded = [f for f in want["flags"] if f["exceeded"]]
    assert [f["limit"] for f in exceeded] == ["max_force_N", "max_accel_m_s2"]  # 71 N > 50 N, 1103 > 900
    first = page.locator("#loads-result > *").first
    assert first.get_attribute("role") == "alert" and "2 limits" in first.inner_text()
    assert first.locator("li").all_inner_texts() == [f"{f['message']}." for f in exceeded]
    # In imperial the flags follow: 1 lbf = 4.4482216152605 N, 1 ft = 0.3048 m (NIST SP 811,
    # appendix B), 4 significant figures printed.
    page.check('input[name="units"][value="imperial"]')
    page.wait_for_function("() => document.querySelector('#loads-result li[data-limit]')"
                           "?.textContent.includes('lbf')")
    words = page.locator("#loads-result > *").first.locator("li").all_inner_texts()
    for flag, text, unit, factor in zip(exceeded, words, ["lbf", "ft/s²"], [4.4482216152605, 0.3048]):
        numbers = [float(n.replace(",", "")) for n in re.findall(r"([\d.,]+) " + re.escape(unit), text)]
        assert numbers == pytest.approx([flag["value"] / factor, flag["limit_value"] / factor], rel=5e-4), text
    page.check('input[name="units"][value="metric"]')
    page.tap("#motion-run")
    wait_for_run(page)
    check_targets_and_labels(page)
    shot(page, "motion-tablet-portrait-page")
    ARTIFACTS.mkdir(exist_ok=True)
    page.locator("section.motion").screenshot(path=str(ARTIFACTS / "motion-tablet-portrait.png"))


def test_print_keeps_the_results_and_drops_the_controls(motion_page):
    page = motion_page
    page.emulate_media(media="print")
    try:
        for hidden in (".player", "#motion-form", ".knock-row", ANIM):
            assert not page.is_visible(hidden), hidden
        assert page.is_visible("#motion-plot svg") and page.is_visible("#loads-result table")
    finally:
        page.emulate_media(media="screen")


def test_laptop_screenshots(motion_page):
    page = motion_page
    check_targets_and_labels(page)
    set_frame(page, 2700)
    shot(page, "motion-laptop-page")
    ARTIFACTS.mkdir(exist_ok=True)
    page.locator("section.motion").screenshot(path=str(ARTIFACTS / "motion-laptop.png"))
    assert page.errors == []


def test_the_motion_plot_saves_as_svg_and_png(motion_page):
    # The saved SVG is the plot on show (same viewBox, same number of polylines: XML parsed by
    # the standard library); the PNG is a PNG (signature, ISO/IEC 15948) twice its width.
    import struct
    import xml.etree.ElementTree as ET
    page = motion_page
    button = 'button[data-save-from="motion-plot"][data-save-as="svg"]'
    page.wait_for_function(f"() => !document.querySelector('{button}').disabled")
    shown = page.evaluate("""() => { const s = document.querySelector('#motion-plot svg');
        return [s.getAttribute('viewBox'), s.querySelectorAll('polyline').length]; }""")
    with page.expect_download() as got:
        page.click(button)
    svg = ET.parse(got.value.path()).getroot()
    polylines = svg.findall(".//{http://www.w3.org/2000/svg}polyline")
    assert [svg.get("viewBox"), len(polylines)] == shown
    with page.expect_download() as got:
        page.click('button[data-save-from="motion-plot"][data-save-as="png"]')
    png = open(got.value.path(), "rb").read()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert struct.unpack(">I", png[16:20])[0] == round(2 * float(shown[0].split()[2]))


def test_the_runs_frames_save_as_the_command_lines_csv(motion_page):
    # "Frames as CSV" gives the file `shakestill simulate -o` writes for the run on show:
    # the same columns and rows as the same run by the core on CPython, with the columns that
    # do not depend on the integration (time, drive speed, pivot height: functions of t) to
    # 1e-9; and its angles are the run on show (the last frame's angles, which the animation
    # carries, to the CSV's 10 significant digits). The angles themselves are not compared
    # across platforms here: after knocks the two adaptive runs drift apart in the 7th digit.
    import csv
    page = motion_page
    page.wait_for_function("() => !document.getElementById('motion-save-csv').disabled")
    with page.expect_download() as got:
        page.click("#motion-save-csv")
    rows = list(csv.reader(open(got.value.path())))
    want = list(csv.reader(core_run(page)["csv"].splitlines()))
    assert rows[0] == want[0] and rows[0][:3] == ["t_s", "speed_rpm", "pivot_y_m"]
    assert len(rows) == len(want) > 2
    for a, b in zip(rows[1:], want[1:]):
        assert [float(x) for x in a[:3]] == pytest.approx([float(x) for x in b[:3]],
                                                           rel=1e-9, abs=1e-12)
    n = sum(1 for name in rows[0] if name.startswith("angle"))
    shown_end = data(page, ANIM, "end-angles")
    assert [float(x) for x in rows[-1][3:3 + n]] == pytest.approx(shown_end, rel=1e-9, abs=1e-12)
