"""Page load: time from navigation to the first check result, by phase, in headless Chromium.

    python bench/bench_page_load.py [--runs 5]

Uses the built dist/ (python build_scripts/build_site.py). For the served
site (dist/site/ on 127.0.0.1) and the single file (opened from disk):
a cold first visit in a fresh browser profile, then a second visit in the
same profile (the served site then answers from its service worker; it is
also timed with the network gone). Each second visit is timed twice:
"snapshot", Python restored from the memory
snapshot the cold visit left in Cache Storage (site/engine/snapshot.js; the
single file's page keeps it for its worker), then "second" (and, served,
"offline") with that snapshot deleted, a plain start. The page shows a marked cached verdict
first and writes the engine's own check result as JSON to data-result of
#check-report with data-state="fresh".

Phases come from the worker's performance marks (site/engine/worker.js
`mark`), placed on the page's clock: worker (navigation to the worker's
first line), files (the single file's embedded files reaching the worker),
boot (loadPyodide, with the packages it preloads), micropip (loading
micropip and packaging after it), install (micropip installs the core),
import (importing the core), check (the first check, the page's request
included). The peer, measured in the same run and the same way: a bare
Pyodide boot (bench/bare_pyodide.py: loadPyodide plus ``1+1`` in a module
worker). Prints figures and ratios only; asserts nothing.
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
sys.path.insert(0, str(TOP / "bench"))

import bare_pyodide  # noqa: E402
import build_site  # noqa: E402
import serve  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync"]
VERDICT = "#check-report[data-result]"  # any verdict on screen, a marked cached one included
RESULT = "#check-report[data-state=fresh]"  # the engine's own result
READY = "#chip-engine[data-state=ready]"  # the page's engine chip once the worker is ready
SNAPSHOT_KEPT = "#chip-engine[data-snapshot]"  # the worker kept (or failed to keep) a snapshot
SNAPSHOT_CACHE = "snapshot-of-shakestill-v1"  # site/engine/snapshot.js CACHE
TIMEOUT_MS = 120_000
# The worker's marks in the order of start-up; each phase ends at its mark.
MARKS = ("worker", "files", "python", "micropip", "installed", "imported", "check")
PHASES = ("worker", "files", "boot", "micropip", "install", "import", "check")
# The verdict's time on the page's own clock: the first animation frame after #check-report
# has a result. Timed from Python instead, it would include the wait for the page's main
# thread, which the single file keeps busy parsing its archive after the verdict is drawn.
VERDICT_FRAME_JS = """
new MutationObserver((changes, observer) => {
  const report = document.getElementById("check-report");
  if (!report || !report.dataset.result) return;
  observer.disconnect();
  requestAnimationFrame(() => { window.shakestillBenchVerdict = performance.now(); });
}).observe(document, { subtree: true, childList: true, attributes: true });
"""
MARKS_JS = """() => [performance.timeOrigin, Object.fromEntries(performance.getEntriesByType("mark")
  .filter((m) => m.name.startsWith("shakestill:")).map((m) => [m.name.slice(11), m.startTime]))]"""


def phases(page) -> dict[str, float]:
    """Seconds of each start-up phase, from the engine worker's marks on the page's clock."""
    origin = page.evaluate("performance.timeOrigin")
    for worker in page.workers:
        try:
            worker_origin, marks = worker.evaluate(MARKS_JS)
        except Exception:  # a worker that has gone away or is not ours
            continue
        if "worker" not in marks:
            continue
        at = {name: (worker_origin + marks[name] - origin) / 1000 for name in MARKS if name in marks}
        ends = [at.get(name) for name in MARKS]
        out, before = {}, 0.0
        for phase, end in zip(PHASES, ends):
            if end is not None:
                out[phase], before = end - before, end
        return out
    return {}


def first_result(page, url: str, visit: str) -> dict:
    """Seconds from navigation to a verdict on screen, the engine ready and its check result."""
    start = time.perf_counter()
    page.goto(url, wait_until="commit")
    page.wait_for_selector(VERDICT, state="attached", timeout=TIMEOUT_MS)
    page.wait_for_function("window.shakestillBenchVerdict !== undefined", timeout=TIMEOUT_MS)
    verdict = page.evaluate("window.shakestillBenchVerdict") / 1000
    page.wait_for_selector(READY, state="attached", timeout=TIMEOUT_MS)
    ready = time.perf_counter() - start
    page.wait_for_selector(RESULT, state="attached", timeout=TIMEOUT_MS)
    result = time.perf_counter() - start
    row = {"verdict": verdict, **phases(page), "ready": ready, "result": result}
    row["check result"] = json.loads(page.get_attribute("#check-report", "data-result"))
    row["started"] = page.get_attribute("#chip-engine", "data-started")
    return {visit: row}


def browser(playwright, profile: str):
    context = playwright.chromium.launch_persistent_context(
        profile, executable_path=CHROMIUM, args=FLAGS, headless=True)
    context.add_init_script(VERDICT_FRAME_JS)
    return context


def visits(playwright, url: str, served: bool) -> tuple[dict, list[str]]:
    with tempfile.TemporaryDirectory() as profile:
        context = browser(playwright, profile)
        outside = []
        context.on("request", lambda r: outside.append(r.url)
                   if not r.url.startswith((url, "data:", "blob:")) else None)
        page = context.new_page()
        rows = first_result(page, url, "cold")
        if served:  # the service worker must hold everything before the second visit counts
            page.wait_for_selector("html[data-offline=ready]", state="attached", timeout=TIMEOUT_MS)
        # ...and the snapshot the first visit leaves (site/engine/snapshot.js; the single
        # file's page keeps it for its worker)
        page.wait_for_selector(SNAPSHOT_KEPT, state="attached", timeout=TIMEOUT_MS)
        page.close()
        page = context.new_page()
        rows.update(first_result(page, url, "snapshot"))
        # the plain second (and offline) visit: without the snapshot
        page.evaluate("(name) => caches.delete(name)", SNAPSHOT_CACHE)
        page.close()
        page = context.new_page()
        rows.update(first_result(page, url, "second"))
        if served:
            page.evaluate("(name) => caches.delete(name)", SNAPSHOT_CACHE)
            page.close()
            context.set_offline(True)
            page = context.new_page()
            rows.update(first_result(page, url, "offline"))
        context.close()
    return rows, outside


def bare_boot(playwright, url: str) -> dict:
    """Seconds to a bare Pyodide's ``1+1``, cold and on a second visit (HTTP cache)."""
    rows = {}
    with tempfile.TemporaryDirectory() as profile:
        context = browser(playwright, profile)
        for visit in ("cold", "second"):
            page = context.new_page()
            start = time.perf_counter()
            page.goto(url, wait_until="commit")
            page.wait_for_selector(bare_pyodide.DONE, state="attached", timeout=TIMEOUT_MS)
            rows[visit] = {"result": time.perf_counter() - start}
            page.close()
        context.close()
    return rows


def median_rows(samples: list[dict]) -> dict[str, dict[str, float]]:
    out = {}
    for visit in samples[0]:
        keys = [k for k, v in samples[0][visit].items() if isinstance(v, float)]
        out[visit] = {k: statistics.median(s[visit][k] for s in samples if k in s[visit]) for k in keys}
    return out


def print_table(medians: dict[str, dict[str, dict[str, float]]]) -> None:
    columns = ("verdict", *PHASES, "ready", "result")
    print(f"  {'':26s}" + "".join(f"{c:>9s}" for c in columns))
    for name, by_visit in medians.items():
        for visit, row in by_visit.items():
            cells = "".join(f"{row[c]:9.2f}" if c in row else f"{'-':>9s}" for c in columns)
            print(f"  {name + ', ' + visit:26s}{cells}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5)
    runs = parser.parse_args().runs
    site, single = build_site.SITE, build_site.OFFLINE
    if not (site / "index.html").exists() or not single.exists():
        raise SystemExit("dist/ is not built: python build_scripts/build_site.py")
    from playwright.sync_api import sync_playwright

    with tempfile.TemporaryDirectory() as tmp:
        bare_dir = bare_pyodide.make_folder(build_site.NODE_PYODIDE, Path(tmp) / "bare")
        server, base = serve.start(site)
        bare_server, bare_base = serve.start(bare_dir)
        samples: dict[str, list[dict]] = {"bare Pyodide": [], "served": [], "single file": []}
        outside: dict[str, set] = {"served": set(), "single file": set()}
        with sync_playwright() as playwright:
            for _ in range(runs):  # interleaved, so a change in the machine's load hits all alike
                samples["bare Pyodide"].append(bare_boot(playwright, bare_base))
                for name, url, served in (("served", base, True),
                                          ("single file", single.resolve().as_uri(), False)):
                    rows, seen = visits(playwright, url, served)
                    samples[name].append(rows)
                    outside[name].update(seen)
        server.shutdown()
        bare_server.shutdown()

    print(f"Page load, headless Chromium, median of {runs} runs, seconds from navigation. verdict: "
          "the first frame with a verdict on screen (cached, marked; the page's clock); phases as in this script's docstring; "
          "ready: the engine chip says ready; result: the engine's own check of the demo rig")
    medians = {name: median_rows(rows) for name, rows in samples.items()}
    print_table(medians)
    for name, urls in outside.items():
        print(f"  {name}: requests outside its own files: {len(urls)} {sorted(urls)[:3]}")
    bare = medians["bare Pyodide"]
    for name in ("served", "single file"):
        for visit in ("cold", "second"):
            ratio = medians[name][visit]["result"] / bare[visit]["result"]
            print(f"  {name}, {visit}: first fresh result / bare Pyodide boot ({visit}) = {ratio:.2f} "
                  "(target <= 1.3)")
    for name in ("served", "single file"):
        snap, plain = medians[name]["snapshot"], medians[name]["second"]
        starts = [rows["snapshot"]["started"] for rows in samples[name]]
        print(f"  {name}, second visit from the snapshot (started from it in "
              f"{starts.count('snapshot')}/{len(starts)} runs): engine ready {snap['ready']:.2f} s "
              f"(target <= 1.5), plain second {plain['ready']:.2f} s, ratio {snap['ready'] / plain['ready']:.2f}; "
              f"result {snap['result']:.2f} s, / bare Pyodide second {snap['result'] / bare['second']['result']:.2f}")
        same = all(rows["snapshot"]["check result"] == rows["second"]["check result"] for rows in samples[name])
        print(f"  {name}: check result from the snapshot equal to the plain second visit's in every run: {same}")
    served, one = medians["served"], medians["single file"]
    print(f"  ratio single file / served, cold result: {one['cold']['result'] / served['cold']['result']:.2f}")
    result = samples["served"][0]["cold"]["check result"]
    print(f"  demo rig verdict: inverted stable={result.get('inverted', {}).get('stable')}, "
          f"hanging stable={result.get('hanging', {}).get('stable')}")
    print(f"Sizes: dist/site/ {build_site.tree_size(site) / 1e6:.2f} MB (target < 15), "
          f"single file {single.stat().st_size / 1e6:.2f} MB (target <= 9)")


if __name__ == "__main__":
    main()
