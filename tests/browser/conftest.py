"""Fixtures for the page tests: the built site served on 127.0.0.1, Debian's
Chromium driven by Playwright (never a downloaded browser), every request the
browser makes recorded, and screenshots saved to test-artifacts/.

Booting Pyodide is the slow part of a page test, so most tests take `demo_page`: one page per
worker (booted once, at a laptop viewport) reset before each test to a first visit of the
demo rig (`pagekit.reset_page`: storage, panel inputs, every panel's work and output, dialogs,
notice, units and undo history cleared, the build's demo checked again) without starting the
engine again. `booted(viewport, **options)` does the same for other context options (a tablet
with touch, a phone), one page per worker and set of options (BootedPages). A test that needs a cold boot (start-up states, the cached verdict
before the engine, a restored snapshot, a link opened on a fresh page, the offline file, a page
reloaded) takes `page` or `new_context` and says why beside it.

Missing prerequisites (dist/ not built, no Chromium, no Playwright) skip these
tests locally with the reason; with CI=true they fail instead.
"""

from __future__ import annotations

import importlib.util
import json
from pathlib import Path

import pytest

from pagekit import CHROMIUM, CHROMIUM_ARGS, LAPTOP, OFFLINE, SITE, TOP, open_page, reset_page
from prereq import missing


def _serve_module():
    spec = importlib.util.spec_from_file_location("shakestill_serve", TOP / "build_scripts" / "serve.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="session")
def site_dir() -> Path:
    if not (SITE / "index.html").is_file() or not (SITE / "sw.js").is_file():
        missing("dist/site/ is not built: run python build_scripts/build_site.py")
    return SITE


@pytest.fixture(scope="session")
def offline_file() -> Path:
    if not OFFLINE.is_file():
        missing("dist/shakestill-offline.html is not built: run python build_scripts/build_site.py")
    return OFFLINE


class Server:
    """dist/site/ on 127.0.0.1 at a random free port, in a background thread."""

    def __init__(self, folder: Path):
        self.server, self.url = _serve_module().start(folder, 0)
        self.origin = self.url.rstrip("/")

    def stop(self):
        self.server.shutdown()
        self.server.server_close()


@pytest.fixture(scope="session")
def server(site_dir):
    srv = Server(site_dir)
    yield srv
    srv.stop()


@pytest.fixture
def own_server(site_dir):
    """A server of the test's own, for tests that stop it."""
    srv = Server(site_dir)
    yield srv
    try:
        srv.stop()
    except OSError:
        pass


@pytest.fixture(scope="session")
def browser():
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        missing("playwright is not installed (pip install -e .[test])")
    if not CHROMIUM.exists():
        missing("Debian's chromium is not installed at /usr/bin/chromium (apt-get install chromium)")
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        yield b
        b.close()


class Recorder:
    """Every request the browser makes in one context, and every page error."""

    def __init__(self):
        self.urls: list[str] = []
        self.errors: list[str] = []

    def attach(self, context):
        context.on("request", lambda req: self.urls.append(req.url))
        context.on("page", self.watch)
        for page in context.pages:
            self.watch(page)

    def watch(self, page):
        page.on("request", lambda req: self.urls.append(req.url))
        page.on("pageerror", lambda err: self.errors.append(str(err)))


@pytest.fixture
def new_context(browser):
    """Factory of fresh browser contexts (own storage, own service workers), each recorded."""
    made = []

    def make(viewport=LAPTOP, **options):
        context = browser.new_context(viewport=viewport, accept_downloads=True, **options)
        context.recorder = Recorder()
        context.recorder.attach(context)
        made.append(context)
        return context

    yield make
    for context in made:
        context.close()


@pytest.fixture
def context(new_context):
    return new_context()


@pytest.fixture
def page(context):
    return context.new_page()


class BootedPages:
    """Booted pages kept for a test session (one xdist worker), one per set of context
    options (viewport, touch, colour scheme, ...), the least recently used closed beyond
    `KEEP`. `take` hands one out as on a first visit to the demo rig with its check done:
    reset (pagekit.reset_page) if a test had it before, its viewport and media as its context
    gives them, its context's recorder emptied (the boot's own requests stay in
    `page.boot_urls`)."""

    KEEP = 3  # a booted Pyodide page holds a few hundred MB; CI has two workers

    def __init__(self, browser, server):
        self.browser, self.server = browser, server
        self.pages: dict[str, object] = {}

    def take(self, viewport=LAPTOP, **options):
        key = json.dumps({"viewport": viewport, **options}, sort_keys=True)
        page = self.pages.pop(key, None)
        if page is None:
            while len(self.pages) >= self.KEEP:
                oldest = next(iter(self.pages))
                self.pages.pop(oldest).context.close()
            context = self.browser.new_context(viewport=viewport, accept_downloads=True, **options)
            context.recorder = Recorder()
            context.recorder.attach(context)
            page = context.new_page()
            open_page(page, self.server.url)
            page.boot_urls = list(context.recorder.urls)
            page.evaluate("() => { window.shakestillDemoPage = true; }")  # see pagekit.reset_page
            page.used = False
        self.pages[key] = page  # now the most recently used
        # a test before may have printed, switched the colour scheme or resized the window
        page.emulate_media(media="screen", color_scheme=options.get("color_scheme", "light"))
        page.set_viewport_size(viewport)
        if page.used:
            reset_page(page, self.server.url)
        page.used = True
        page.context.recorder.urls.clear()
        page.context.recorder.errors.clear()
        return page

    def close(self):
        for page in self.pages.values():
            page.context.close()


@pytest.fixture(scope="session")
def booted_pages(browser, server):
    # One set per worker, shared across modules: the reset returns a page to a first visit,
    # panels' work and output included, as test_reset_first_visit.py checks against a page
    # booted afresh. What a test adds to the page object itself (a listener, a route) is not
    # undone: a test that adds one takes `page` or closes what it added.
    pages = BootedPages(browser, server)
    yield pages
    pages.close()


@pytest.fixture
def booted(booted_pages):
    """`booted(viewport, **context_options)`: a booted page with those options, reset to a first
    visit of the demo rig (see BootedPages). For tests that would open the page at a size or
    scheme of their own but need no cold boot."""
    return booted_pages.take


@pytest.fixture
def demo_page(booted_pages):
    """A booted page at the laptop viewport, as on a first visit to the demo rig with its check
    done (see the module's docstring and BootedPages). Its context's recorder starts empty."""
    return booted_pages.take()
