"""Status words that wait for the engine ("... once the engine has started") are true only
while it starts: once the engine's own result is on the page, every one of them says what
comes next instead (issue 16, honest states), at desktop, tablet (touch) and phone sizes."""

from __future__ import annotations

import pytest

from pagekit import LAPTOP, TABLET_PORTRAIT, shot, wait_for_result

pytestmark = pytest.mark.browser

WAITING = "once the engine has started"
SIZES = {
    "desktop": {"viewport": LAPTOP},
    "tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
    "phone": {"viewport": {"width": 390, "height": 844}, "has_touch": True, "is_mobile": True},
}


@pytest.mark.parametrize("size", list(SIZES))
def test_no_status_says_it_waits_for_an_engine_that_has_started(new_context, server, size):
    page = new_context(**SIZES[size]).new_page()
    page.goto(server.url)
    # The words come from the markup (site/index.html: the verdict, the map's status and
    # placeholder on load; the motion's status comes with its panel), each with the words it
    # says once the engine is ready.
    assert page.locator("[data-ready-text]").count() >= 3
    wait_for_result(page)
    page.wait_for_function("() => document.getElementById('chip-engine').textContent"
                           ".includes('ready')", timeout=30_000)
    words = page.evaluate("() => document.body.innerText")
    assert WAITING not in words
    left = page.evaluate("""(w) => [...document.querySelectorAll('[data-ready-text]')]
        .filter((el) => el.textContent.includes(w)).map((el) => el.id || el.className)""", WAITING)
    assert left == []
    shot(page, f"ready-words-{size}")
