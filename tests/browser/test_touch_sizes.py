"""The first verdict and undo on a tablet held upright (touch) and on a phone.

A cold visit shows the demo rig's verdict worked out at build time at once, marked
data-state "cached" / data-source "build", then the engine's own result (the core on CPython
is the independent reading, as in test_first_verdict.py at desktop size). An edit undone by
tapping Undo gives back the field as typed and the same check, to the bit (the check of the
same rig by the core on CPython, 1e-9 relative). Each size needs a cold page of its own: the
cached verdict exists only before the engine has started.
"""

from __future__ import annotations

import json

import pytest
import shakestill as ss

from pagekit import SITE, TABLET_PORTRAIT, assert_same_numbers, shot, wait_for_result

pytestmark = pytest.mark.browser

PHONE = {"width": 390, "height": 844}
SIZES = {"tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True},
         "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True}}
CACHED = "() => document.getElementById('check-report').dataset.state === 'cached'"


@pytest.mark.parametrize("size", sorted(SIZES))
def test_cached_then_fresh_verdict_and_undo_by_touch(new_context, server, size):
    page = new_context(**SIZES[size]).new_page()
    errors = []
    page.on("pageerror", lambda err: errors.append(str(err)))
    page.goto(server.url)
    page.wait_for_function(CACHED, timeout=30_000)
    assert page.get_attribute("#check-report", "data-source") == "build"
    cached = json.loads(page.get_attribute("#check-report", "data-result"))
    assert cached == json.loads((SITE / "demo-check.json").read_text())["reply"]["result"]
    shot(page, f"{size}-first-verdict-cached")
    fresh = wait_for_result(page)
    assert page.get_attribute("#check-report", "data-source") is None
    want = json.loads(json.dumps(ss.check(ss.demo_rig())))  # the core on CPython
    assert_same_numbers(fresh, want, rel=1e-9, where=f"{size} fresh check")

    field = page.locator('[data-path="drive.speed_rpm"]')
    typed = field.input_value()
    raw = lambda: page.get_attribute("#check-report", "data-result")  # noqa: E731
    before = raw()
    field.fill("2500 rpm")
    edited = wait_for_result(page, before)
    assert edited["speed_rpm"] == 2500.0
    before = raw()
    page.locator("#undo").tap()
    back = wait_for_result(page, before)
    assert field.input_value() == typed
    assert_same_numbers(back, want, rel=1e-9, where=f"{size} after undo")
    before = raw()
    page.locator("#redo").tap()
    again = wait_for_result(page, before)
    assert again["speed_rpm"] == 2500.0 and field.input_value() == "2500 rpm"
    assert errors == []
