"""Helpers of the page tests: paths, viewports, waiting for results, the CLI's
check of the same rig, and number comparison."""

from __future__ import annotations

import json
import math
import shutil
import subprocess
import sys
from pathlib import Path

TOP = Path(__file__).resolve().parents[2]
SITE = TOP / "dist" / "site"
OFFLINE = TOP / "dist" / "shakestill-offline.html"
ARTIFACTS = TOP / "test-artifacts"
CHROMIUM = Path("/usr/bin/chromium")
# The flags that work on this machine's closed network (see the project rules).
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]
# Pyodide starts in a few seconds on a quiet machine; CI shares two cores with the build.
BOOT_TIMEOUT_MS = 120_000
RESULT_TIMEOUT_MS = 120_000

LAPTOP = {"width": 1366, "height": 768}
TABLET_PORTRAIT = {"width": 768, "height": 1024}
TABLET_LANDSCAPE = {"width": 1024, "height": 768}
PHONE = {"width": 390, "height": 844}
# Context options of a tablet held upright and of a phone, both by touch.
TOUCH_SIZES = {"tablet": {"viewport": TABLET_PORTRAIT, "has_touch": True, "is_mobile": True},
               "phone": {"viewport": PHONE, "has_touch": True, "is_mobile": True}}



def shot(page, name: str, full_page: bool = True) -> Path:
    """Save a screenshot of the page's current state to test-artifacts/."""
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / f"{name}.png"
    page.screenshot(path=str(path), full_page=full_page)
    return path


def wait_for_result(page, previous: str | None = None, timeout: int = RESULT_TIMEOUT_MS) -> dict:
    """Wait for a fresh check result other than `previous` (JSON text); return it parsed.

    Stops at once, with the page's own words, if the engine failed to start.
    """
    page.wait_for_function(
        """(previous) => {
            if (!document.getElementById("boot-failed").hidden) return true;
            const el = document.getElementById("check-report");
            return el && el.dataset.state === "fresh" && el.dataset.result !== undefined
                && el.dataset.result !== previous;
        }""", arg=previous, timeout=timeout)
    if page.is_visible("#boot-failed"):
        raise AssertionError(f"the engine did not start: {page.inner_text('#boot-failed-reason')}")
    return json.loads(page.get_attribute("#check-report", "data-result"))


def open_page(page, url: str) -> dict:
    page.goto(url)
    return wait_for_result(page, timeout=BOOT_TIMEOUT_MS)


def reset_page(page, url: str) -> dict:
    """Back to a first visit of the demo rig at `url` without booting the engine again (the
    page's `shakestillResetForTests`, see site/app.js), its check done; return the result.
    A page that is no longer the document this function (or a first open) left, say one the
    test reloaded or navigated away, is opened afresh instead, with its storage cleared."""
    same = page.url.split("#")[0] == url and page.evaluate(
        "() => window.shakestillDemoPage === true && document.getElementById('boot-failed').hidden")
    if not same:
        # Leaving the page saves its rig (a pagehide handler), so storage is cleared from
        # another document of the same origin, one that runs no page code.
        page.goto(url + "build-info.json")
        page.evaluate("() => { localStorage.clear(); sessionStorage.clear(); }")
        result = open_page(page, url)
    else:
        if page.url != url:
            page.evaluate("(url) => history.replaceState(null, '', url)", url)
        page.evaluate("() => window.shakestillResetForTests()")
        result = wait_for_result(page)
    page.evaluate("() => { window.shakestillDemoPage = true; }")
    return result


def open_watched(browser, url: str, viewport=LAPTOP, **options):
    """A page in a browser context of its own, opened at `url` with its first check done; its
    script errors are collected in page.errors. Close it with page.context.close()."""
    page = browser.new_context(viewport=viewport, **options).new_page()
    page.errors = []
    page.on("pageerror", lambda err: page.errors.append(str(err)))
    open_page(page, url)
    return page


def cli_json(name: str, rig: dict, tmp_path: Path, *, codes=(0,), timeout: int = 300) -> dict:
    """`shakestill NAME RIG --json` on a rig file, as the command line gives it."""
    path = tmp_path / f"{name}-rig.json"
    path.write_text(json.dumps(rig))
    exe = shutil.which("shakestill", path=str(Path(sys.executable).parent)) or shutil.which("shakestill")
    command = [exe] if exe else [sys.executable, "-m", "shakestill.cli"]
    done = subprocess.run([*command, name, str(path), "--json"], capture_output=True, text=True,
                          timeout=timeout)
    assert done.returncode in codes, done.stderr
    return json.loads(done.stdout)


def cli_check(rig: dict, tmp_path: Path) -> dict:
    """`shakestill check RIG --json` (exit 1 is an unstable verdict, still an answer)."""
    return cli_json("check", rig, tmp_path, codes=(0, 1))


# Work counters are not results: the page's engine (Pyodide) and the command line (CPython)
# may differ in the last bit of a libm function, which can change a root finder's iteration
# count by one while every result still agrees (as in tests/test_pyodide.py).
WORK_COUNTERS = {"evaluations"}


def assert_same_numbers(got, want, rel=1e-9, abs_tol=1e-12, where="result"):
    """Same structure, same strings and booleans; numbers equal to `rel` relative
    (work counters left out)."""
    if isinstance(want, dict):
        assert isinstance(got, dict) and set(got) == set(want), f"{where}: keys {sorted(got)} != {sorted(want)}"
        for key in set(want) - WORK_COUNTERS:
            assert_same_numbers(got[key], want[key], rel, abs_tol, f"{where}.{key}")
    elif isinstance(want, list):
        assert isinstance(got, list) and len(got) == len(want), f"{where}: {got!r} != {want!r}"
        for i, (g, w) in enumerate(zip(got, want)):
            assert_same_numbers(g, w, rel, abs_tol, f"{where}[{i}]")
    elif isinstance(want, (int, float)) and not isinstance(want, bool):
        assert isinstance(got, (int, float)) and not isinstance(got, bool), f"{where}: {got!r} != {want!r}"
        assert math.isclose(got, want, rel_tol=rel, abs_tol=abs_tol), f"{where}: {got!r} != {want!r}"
    else:
        assert got == want, f"{where}: {got!r} != {want!r}"


def open_sheet(page):
    """The rig sheet in reach: on a narrow screen it is a drawer behind its tab."""
    if page.is_visible("#sheet-tab"):
        page.tap("#sheet-tab")


def press(page, selector: str, touch: bool) -> None:
    """A button pressed as the size's user would: tapped on a touch screen, clicked with a mouse."""
    if touch:
        page.locator(selector).scroll_into_view_if_needed()
        page.tap(selector)
    else:
        page.click(selector)


def close_sheet(page):
    """The drawer closed again (it lies over the page on a narrow screen)."""
    if page.is_visible("#sheet-close"):
        page.tap("#sheet-close")


def make_link(page, tap: bool = False) -> str:
    """The page's share link for its rig, as the Copy link button puts it in the share box."""
    old = page.input_value("#share-box")
    (page.tap if tap else page.click)("#copy-link")
    page.wait_for_function("""(old) => {
        const value = document.getElementById("share-box").value;
        return value.includes("#") && value !== old;
    }""", arg=old)
    return page.input_value("#share-box")


def wait_for_stale(page, timeout: int = RESULT_TIMEOUT_MS) -> None:
    """Wait until the verdict is marked stale (a problem in the sheet keeps the old result)."""
    page.wait_for_function("() => document.getElementById('check-report').dataset.state === 'stale'",
                           timeout=timeout)


def wait_for_rig(page, text: str, timeout: int = RESULT_TIMEOUT_MS) -> dict:
    """Wait for a fresh result of a rig whose JSON holds `text` (a title, say); return the result."""
    page.wait_for_function("""(text) => {
        const el = document.getElementById("check-report");
        return el.dataset.state === "fresh" && (el.dataset.rig || "").includes(text);
    }""", arg=text, timeout=timeout)
    return json.loads(page.get_attribute("#check-report", "data-result"))


AXE = TOP / "node_modules" / "axe-core" / "axe.min.js"  # npm devDependency, pinned in package-lock


def axe_violations(page, include: str | None = None) -> list[dict]:
    """The axe-core audit (WCAG 2.0-2.2 A and AA rules, best practices) of the page as it is,
    or of the part under ``include``: [{id, impact, help, nodes: [target...]}]. The page's
    context needs ``bypass_csp=True`` (the page's CSP admits only its own scripts)."""
    from prereq import missing
    if not AXE.is_file():
        missing("node_modules/axe-core is missing: `npm ci` (build_scripts/setup_env.sh) installs it")
    if not page.evaluate("() => typeof window.axe === 'object'"):
        page.add_script_tag(path=str(AXE))
    found = page.evaluate("""async (include) => {
        const result = await window.axe.run(include ? { include: [include] } : document,
            { resultTypes: ["violations"] });
        return result.violations.map((v) => ({ id: v.id, impact: v.impact, help: v.help,
            nodes: v.nodes.map((n) => n.target.join(" ")) }));
    }""", include)
    return found


def assert_map_csv_is_the_cli_chart(page, csv_path, tmp_path: Path) -> None:
    """The map's saved CSV holds every row's stable intervals of `shakestill chart --json` for
    the rig the page shows (the command line on CPython), 1e-9 relative (Pyodide and CPython
    may differ in the last bits of libm, as in tests/test_pyodide.py)."""
    import csv
    lines = list(csv.reader(open(csv_path)))
    assert lines[0] == ["stroke_m", "equilibrium", "stable_from_rpm", "stable_to_rpm"]
    rig = tmp_path / "map-rig.json"  # the rig the map was drawn for
    rig.write_text(page.get_attribute("#check-report", "data-rig"))
    out = subprocess.run([sys.executable, "-m", "shakestill", "chart", str(rig), "--json"],
                         capture_output=True, text=True, timeout=600)
    want = [[row["y"], eq, a, b] for row in json.loads(out.stdout)["rows"]
            for eq in ("inverted", "hanging") for a, b in row[eq]["stable_intervals_rpm"]]
    assert len(lines) - 1 == len(want)
    for got_row, want_row in zip(lines[1:], want):
        assert got_row[1] == want_row[1]
        for g, w in zip(map(float, (got_row[0], *got_row[2:])), (want_row[0], *want_row[2:])):
            assert abs(g - w) <= max(1e-9 * abs(w), 1e-12), (got_row, want_row)


def assert_single_file_shares_by_fragment(page, tap: bool = False) -> None:
    """On the single file opened from disk, "Copy share link" gives the rig's fragment (a
    file:// link would open only on this computer) which decodes to the demo rig on the sheet
    (the core's share.decode on CPython), and the notice says where it opens and offers the
    rig file."""
    import shakestill as ss
    from shakestill.model import share
    button = page.locator("#copy-link")
    button.tap() if tap else button.click()
    page.wait_for_function("() => document.getElementById('share-box').value !== ''")
    fragment = page.input_value("#share-box")
    assert fragment.startswith("#") and "file:" not in fragment
    rig, _ = share.decode(fragment)
    assert ss.rig_to_dict(ss.rig_from_dict(rig)) == ss.rig_to_dict(ss.demo_rig())
    words = page.inner_text("#notice-text")
    assert "opened from a file on this computer" in words and "rig file" in words
    assert page.locator("#notice-actions button", has_text="Save the rig file to send").is_visible()
