"""The lean chart's words in dark mode: the chart sits on a light card of its own, and the
words under it (where a curve stops, the safety pointer, the command line's words opened)
must keep WCAG 2.2 AA contrast there. The audit is axe-core's (npm, pinned), desktop and a
390 px phone, dark and light."""

from __future__ import annotations

import pytest
import shakestill as ss
from shakestill.model import share

from pagekit import LAPTOP, axe_violations, open_page, shot

pytestmark = pytest.mark.browser

SIZES = {
    "desktop": {"viewport": LAPTOP},
    "phone": {"viewport": {"width": 390, "height": 844}, "has_touch": True, "is_mobile": True},
}


@pytest.mark.parametrize("size", SIZES)
def test_the_lean_chart_words_pass_the_audit(new_context, server, size):
    # One boot and one lean chart per size, audited dark and then light: the schemes are CSS
    # alone (prefers-color-scheme in site/styles.css), so switching the emulated media restyles
    # the same page, and each audit first checks the switch took.
    page = new_context(**SIZES[size], color_scheme="dark", bypass_csp=True).new_page()
    data = ss.demo_rig_dict()
    data["title"] = "Lean words rig"
    data["drive"] = {"waveform": "sine", "stroke_m": 0.024, "speed_rpm": 2700, "axis_tilt_deg": 1}
    open_page(page, f"{server.url}#{share.encode(data)}")
    page.click("#lean-go")
    page.wait_for_function("() => document.getElementById('lean-chart').dataset.state === 'fresh'",
                           timeout=180_000)
    page.click("#lean-chart .report-text summary")  # the command line's words opened
    for scheme in ("dark", "light"):
        page.emulate_media(color_scheme=scheme)
        assert page.evaluate("matchMedia('(prefers-color-scheme: dark)').matches") == (scheme == "dark")
        page.focus("#lean-chart .safety-pointer a")
        found = axe_violations(page)
        assert found == [], f"{size}, {scheme}: {found}"
        page.locator("#lean-chart").scroll_into_view_if_needed()
        shot(page, f"lean-words-{size}-{scheme}", full_page=False)
