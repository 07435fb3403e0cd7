"""The page's test reset (site/app.js `shakestillResetForTests`, pagekit.reset_page) returns a
used page to a first visit: its state after the reset is compared, element by element, with a
page booted afresh in a context of its own. The independent reference is that fresh page (a
first visit is what the reset claims to reproduce); the demo rig's check on both is also held
to the command line's (CPython) check of the same rig, 1e-9 relative as in tests/test_pyodide.py.

This is what makes sharing one booted page between test modules safe (tests/browser/conftest.py
BootedPages): whatever a test leaves behind in a panel, the next one starts from a first visit."""

from __future__ import annotations

import pytest
import shakestill as ss  # the core on CPython: the independent reading of the check

from pagekit import LAPTOP, assert_same_numbers, cli_check, open_page, reset_page, wait_for_result

pytestmark = pytest.mark.browser

# Everything a person (or the next test) can see or that the page keeps: every element with an
# id (shown or hidden, enabled or not, its data-* state, a control's value or tick, its text with
# spaces folded), any open dialog, the storage, the root's inline style and classes, the title.
FINGERPRINT = """() => {
  const fold = (s) => (s || "").replace(/\\s+/g, " ").trim();
  const els = {};
  // The explanations of terms are numbered as they are made (panels/terms.js), so a page that
  // wrote its report twice numbers them on: they are compared by their words, in page order.
  const tips = [...document.querySelectorAll(".term-tip")].map((el) => fold(el.textContent));
  for (const el of document.querySelectorAll("body [id]:not(.term-tip)")) {
    const rec = { hidden: el.hidden, disabled: !!el.disabled, data: { ...el.dataset },
                  text: fold(el.textContent) };
    if ("value" in el && el.tagName !== "BUTTON" && el.tagName !== "PROGRESS") rec.value = el.value;
    if (el.tagName === "PROGRESS") rec.value = el.value;
    if ("checked" in el) rec.checked = el.checked;
    els[el.id] = rec;
  }
  const controls = [...document.querySelectorAll("input[name], select[name]")].map(
    (el) => [el.name, el.value, el.checked]);
  // The autosave's time stamp (state/storage.js `saved`) is the moment of saving, which differs
  // between any two visits: it is left out; every other stored character is compared.
  const unstamped = (text) => {
    try {
      const value = JSON.parse(text);
      if (value && typeof value === "object" && "saved" in value) value.saved = "(time of saving)";
      return JSON.stringify(value);
    } catch {
      return text;
    }
  };
  const store = (s) => Object.fromEntries(Object.keys(s).sort().map((k) => [k, unstamped(s.getItem(k))]));
  return { els, controls, tips,
           dialogs: [...document.querySelectorAll("dialog[open]")].map((d) => d.id || d.className),
           local: store(localStorage), session: store(sessionStorage),
           root: [document.documentElement.getAttribute("style"), document.documentElement.className],
           title: document.title, hash: location.hash };
}"""

# A page at rest: the check fresh and the map of the demo rig drawn to its end (a first visit
# draws it at once), no job of any panel running.
SETTLED = """() => {
  const busy = [...document.querySelectorAll("[aria-busy='true']")];
  return document.getElementById("check-report").dataset.state === "fresh"
    && document.getElementById("stability-chart").dataset.state === "done" && busy.length === 0;
}"""


def settled_print(page) -> dict:
    page.wait_for_function(SETTLED, timeout=240_000)
    page.wait_for_timeout(600)  # past the panel inputs' save pause (state/panel-inputs.js: 400 ms)
    return page.evaluate(FINGERPRINT)


def differences(got: dict, want: dict) -> list[str]:
    out = []
    for key in sorted(set(got) | set(want)):
        if key == "els":
            for el in sorted(set(got["els"]) | set(want["els"])):
                g, w = got["els"].get(el) or {}, want["els"].get(el) or {}
                for field in sorted(set(g) | set(w)):
                    if g.get(field) != w.get(field):
                        out.append(f"#{el} {field}: reset {g.get(field)!r} != fresh {w.get(field)!r}")
        elif key in ("local", "session"):
            for name in sorted(set(got[key]) | set(want[key])):
                g, w = got[key].get(name), want[key].get(name)
                if g != w:
                    at = next((i for i, (a, b) in enumerate(zip(g or "", w or "")) if a != b),
                              min(len(g or ""), len(w or "")))
                    out.append(f"{key} {name} from character {at}: reset {(g or '')[at:at + 160]!r}"
                               f" != fresh {(w or '')[at:at + 160]!r}")
        elif got.get(key) != want.get(key):
            out.append(f"{key}: reset {got.get(key)!r} != fresh {want.get(key)!r}")
    return out


def use_every_panel(page) -> None:
    """Leave something behind in every panel, the sheet, the units and the undo history."""
    old = page.get_attribute("#check-report", "data-result")
    page.locator('[data-path="drive.speed_rpm"]').fill("2900 rpm")
    wait_for_result(page, old)
    page.fill("#runup-rate", "40")
    page.fill("#motion-duration", "1")
    # each button, then what shows its work is done
    for button, done in (("#runup-go", "['fresh', 'failed'].includes($('runup-result').dataset.state)"),
                         ("#loads-go", "$('loads-result').dataset.state === 'fresh'"),
                         ("#fit-sample", "$('fit-log').value.length > 0"),
                         ("#motion-run", "$('motion-anim').dataset.state === 'fresh'")):
        page.click(button)
        page.wait_for_function(f"() => {{ const $ = (id) => document.getElementById(id); return {done}; }}",
                               timeout=240_000)
    page.check('input[name="units"][value="imperial"]')
    page.wait_for_timeout(600)


def test_a_reset_page_is_a_first_visit(browser, server, tmp_path):
    fresh_ctx = browser.new_context(viewport=LAPTOP)
    used_ctx = browser.new_context(viewport=LAPTOP)
    try:
        fresh, used = fresh_ctx.new_page(), used_ctx.new_page()
        first = open_page(fresh, server.url)
        # Independent value: the command line's check of the demo rig (1e-9 relative).
        assert_same_numbers(first, cli_check(ss.rig_to_dict(ss.demo_rig()), tmp_path))
        want = settled_print(fresh)

        open_page(used, server.url)
        used.evaluate("() => { window.shakestillDemoPage = true; }")  # as BootedPages marks it
        use_every_panel(used)
        again = reset_page(used, server.url)
        assert_same_numbers(again, first)
        got = settled_print(used)
        left = differences(got, want)
        assert not left, "\n".join(left)
    finally:
        fresh_ctx.close()
        used_ctx.close()
