"""Page load: time from navigation to the first check result, in headless Chromium.

    python bench/bench_page_load.py [--runs 3]

Uses the built dist/ (python build_scripts/build_site.py). For the served
site (dist/site/ on 127.0.0.1) and the single file (opened from disk):
a cold first visit in a fresh browser profile, then a second visit in the
same profile (the served site then answers from its service worker; it is
also timed with the network gone). The page shows the built-in demo rig
first and writes its check result as JSON to data-result of #check-report.
Prints figures and ratios only; asserts nothing.
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import tempfile
import time
from pathlib import Path

TOP = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(TOP / "build_scripts"))

import build_site  # noqa: E402
import serve  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync"]
VERDICT = "#check-report[data-result]"  # any verdict on screen, a marked cached one included
RESULT = "#check-report[data-state=fresh]"  # the engine's own result
READY = "#chip-engine[data-state=ready]"  # the page's engine chip once the worker is ready
TIMEOUT_MS = 120_000


def first_result(page, url: str, times: dict, visit: str) -> tuple[float, float, dict]:
    """Seconds from navigation start to the engine ready and to the engine's check result, and
    the result; ``times[visit + " verdict"]`` gets the seconds to a first verdict on screen."""
    start = time.perf_counter()
    page.goto(url, wait_until="commit")
    page.wait_for_selector(VERDICT, state="attached", timeout=TIMEOUT_MS)
    times[f"{visit} verdict"] = time.perf_counter() - start
    page.wait_for_selector(READY, state="attached", timeout=TIMEOUT_MS)
    ready = time.perf_counter() - start
    page.wait_for_selector(RESULT, state="attached", timeout=TIMEOUT_MS)
    elapsed = time.perf_counter() - start
    return ready, elapsed, json.loads(page.get_attribute("#check-report", "data-result"))


def visits(playwright, url: str, served: bool) -> dict[str, float | dict]:
    with tempfile.TemporaryDirectory() as profile:
        context = playwright.chromium.launch_persistent_context(
            profile, executable_path=CHROMIUM, args=FLAGS, headless=True)
        outside = []
        context.on("request", lambda r: outside.append(r.url)
                   if not r.url.startswith((url, "data:", "blob:")) else None)
        page = context.new_page()
        times = {}
        cold_ready, cold, result = first_result(page, url, times, "cold")
        if served:  # the service worker must hold everything before the second visit counts
            page.wait_for_selector("html[data-offline=ready]", state="attached", timeout=TIMEOUT_MS)
        page.close()
        page = context.new_page()
        second_ready, second, _ = first_result(page, url, times, "second")
        times.update({"cold": cold, "second": second, "cold ready": cold_ready,
                      "second ready": second_ready, "result": result, "outside": outside})
        if served:
            page.close()
            context.set_offline(True)
            page = context.new_page()
            times["offline ready"], times["offline"], _ = first_result(page, url, times, "offline")
        context.close()
    return times


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=3)
    runs = parser.parse_args().runs
    site, single = build_site.SITE, build_site.OFFLINE
    if not (site / "index.html").exists() or not single.exists():
        raise SystemExit("dist/ is not built: python build_scripts/build_site.py")
    from playwright.sync_api import sync_playwright

    server, base = serve.start(site)
    rows: dict[str, list[dict]] = {"served": [], "single file": []}
    with sync_playwright() as playwright:
        for _ in range(runs):
            rows["served"].append(visits(playwright, base, served=True))
            rows["single file"].append(visits(playwright, single.resolve().as_uri(), served=False))
    server.shutdown()

    print(f"Page load, headless Chromium, median of {runs} runs, seconds from navigation to a first "
          "verdict on screen (cached, marked), to the engine ready (worker booted) and to the "
          "engine's own check result of the demo rig")
    keys = ("cold verdict", "cold ready", "cold", "second verdict", "second ready", "second",
            "offline verdict", "offline ready", "offline")
    medians = {}
    for name, samples in rows.items():
        medians[name] = {key: statistics.median(s[key] for s in samples) for key in keys if key in samples[0]}
        figures = "  ".join(f"{key} {value:6.2f}" for key, value in medians[name].items())
        print(f"  {name:12s} {figures}")
        outside = sorted({url for s in samples for url in s["outside"]})
        print(f"  {'':12s} requests outside its own files: {len(outside)} {outside[:3]}")
    served, one = medians["served"], medians["single file"]
    print(f"  ratio single file / served, cold: {one['cold'] / served['cold']:.2f}")
    print(f"  ratio second / cold visit: served {served['second'] / served['cold']:.2f}, "
          f"single file {one['second'] / one['cold']:.2f}")
    print(f"  share of the cold first result spent booting: served {served['cold ready'] / served['cold']:.2f}, "
          f"single file {one['cold ready'] / one['cold']:.2f}")
    result = rows["served"][0]["result"]
    print(f"  demo rig verdict: inverted stable={result.get('inverted', {}).get('stable')}, "
          f"hanging stable={result.get('hanging', {}).get('stable')}")
    print(f"Sizes: dist/site/ {build_site.tree_size(site) / 1e6:.2f} MB, "
          f"single file {single.stat().st_size / 1e6:.2f} MB, dist/ {build_site.tree_size(build_site.DIST) / 1e6:.2f} MB")


if __name__ == "__main__":
    main()
