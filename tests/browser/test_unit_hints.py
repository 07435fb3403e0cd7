"""Each rig sheet field's hint lists exactly the units the engine accepts for it.

The independent side is the engine's own refusal, read through the page: a unit nobody uses
typed into the field brings back the validator's message, which names every unit it takes
("... use m, cm, mm, um, in, ft"). A unit added to the engine but not to the hint (or a hint
naming a unit the engine refuses) fails here. Alternative spellings in brackets ("rpm
(r/min)") are extra and not compared. Desktop, tablet (touch) and phone sizes, each on a
booted page of the worker reset to a first visit (conftest.BootedPages) instead of a boot of
its own.
"""

from __future__ import annotations

import re

import pytest

from pagekit import LAPTOP, RESULT_TIMEOUT_MS, TOUCH_SIZES, wait_for_result

pytestmark = pytest.mark.browser

# the same context options as the other touch tests (pagekit.TOUCH_SIZES), so their booted
# pages serve this file too
SIZES = [("desktop", {"viewport": LAPTOP}), ("tablet", TOUCH_SIZES["tablet"]),
         ("phone", TOUCH_SIZES["phone"])]

FIELDS_WITH_UNITS = """() => [...document.querySelectorAll('input[data-path]')]
  .filter((input) => input.offsetParent !== null)
  .map((input) => {
    const ids = (input.getAttribute('aria-describedby') || '').split(/\\s+/);
    const hint = ids.map((id) => document.getElementById(id))
      .find((el) => el && el.classList.contains('hint') && el.textContent.includes('Units:'));
    const msg = ids.find((id) => id.startsWith('m-'));
    return hint && msg ? {path: input.dataset.path, hint: hint.textContent, msg} : null;
  }).filter(Boolean)"""


def units_in(text: str, after: str) -> set[str]:
    listed = re.search(re.escape(after) + r"\s*([^.;]*)", text).group(1)
    listed = re.sub(r"\([^)]*\)", "", listed)  # "rpm (r/min)": the bracketed spelling is extra
    return {u.strip() for u in listed.split(",") if u.strip()}


def wait_cleared(page, message_id: str) -> None:
    page.wait_for_function("(id) => document.getElementById(id).hidden "
                           "|| !document.getElementById(id).textContent.includes('zorks')",
                           arg=message_id, timeout=RESULT_TIMEOUT_MS)


@pytest.mark.parametrize("name, options", SIZES, ids=[s[0] for s in SIZES])
def test_every_hint_names_the_units_the_engine_takes(booted, name, options):
    page = booted(**options)
    wait_for_result(page)
    try:
        # the drive's path off vertical sits in a closed group: open it to check its fields
        page.evaluate("() => document.querySelectorAll('details.drive-path')"
                      ".forEach((d) => { d.open = true; })")
        fields = page.evaluate(FIELDS_WITH_UNITS)
        paths = {f["path"] for f in fields}
        # the demo rig's sheet: every kind of quantity it has is checked
        for must in ("g_m_s2", "links[0].length_m", "links[0].rod_mass_kg",
                     "links[0].extra_inertia_kg_m2", "links[0].joint_damping_N_m_s",
                     "links[0].joint_friction_N_m", "drive.stroke_m", "drive.speed_rpm",
                     "drive.axis_tilt_deg", "drive.side_stroke_m"):
            assert must in paths, (must, sorted(paths))
        restored = None  # the message of the field put back last, not yet seen to clear
        for f in fields:
            field = page.locator(f'input[data-path="{f["path"]}"]')
            before = field.input_value()
            field.fill("1 zorks")
            message = page.locator(f'#{f["msg"]}')
            message.filter(has_text="zorks").wait_for(timeout=RESULT_TIMEOUT_MS)
            # the field before was put back before this one was typed: the message above came
            # from a sheet where this field alone is wrong, and the one before has cleared
            # (waited for here rather than before the typing: the page's edit debounce then
            # answers both edits at once, without a check of the restored demo rig between)
            if restored:
                wait_cleared(page, restored)
            engine = units_in(message.inner_text(), "use")
            assert engine == units_in(f["hint"], "Units:"), (name, f["path"], f["hint"], engine)
            field.fill(before)  # the sheet as it was, so the next field is checked alone
            restored = f["msg"]
        wait_cleared(page, restored)
        assert page.context.recorder.errors == []
    finally:
        # the reset puts inputs back but not a group's open state: close what this test opened
        page.evaluate("() => document.querySelectorAll('details.drive-path')"
                      ".forEach((d) => { d.open = false; })")
