"""A return visit starts Python from the memory snapshot the first visit left in Cache
Storage (site/engine/snapshot.js), and gives the same check as a plain start; a damaged
snapshot or one of another build falls back to a plain start and is deleted.

The reference for every comparison is the plain start's own check JSON in the same
browser profile (the CPython side is tests/browser/test_first_verdict.py's)."""

from __future__ import annotations

import json

import pytest

from pagekit import BOOT_TIMEOUT_MS, TOUCH_SIZES, wait_for_result

pytestmark = pytest.mark.browser

CACHE = "snapshot-of-shakestill-v1"  # site/engine/snapshot.js CACHE

# Rewrites the one stored snapshot in the page: `how` is "corrupt" (same key, the first
# bytes of the snapshot zeroed, still valid gzip) or "rekey" (the same bytes under another
# build's key). Returns the keys stored afterwards.
ALTER_JS = """async ([name, how]) => {
  const cache = await caches.open(name);
  const [request] = await cache.keys();
  const packed = await (await cache.match(request)).blob();
  let body = packed;
  if (how === "corrupt") {
    const plain = new Uint8Array(await new Response(
      packed.stream().pipeThrough(new DecompressionStream("gzip"))).arrayBuffer());
    plain.fill(0, 0, 64);
    body = await new Response(new Blob([plain]).stream().pipeThrough(new CompressionStream("gzip"))).blob();
  }
  await cache.delete(request);
  const url = how === "rekey" ? request.url.replace(/[^\\/]*$/, "314.0.7-another-build") : request.url;
  await cache.put(url, new Response(body));
  return (await cache.keys()).map((r) => r.url);
}"""

KEYS_JS = "async (name) => (await (await caches.open(name)).keys()).map((r) => r.url)"


def visit(context, url: str, *, wait_for_snapshot: bool):
    """Opens the page in the shared profile; returns (check JSON text, how Python started,
    boot log, page). With wait_for_snapshot, waits until this visit has stored its snapshot."""
    page = context.new_page()
    page.goto(url)
    wait_for_result(page, timeout=BOOT_TIMEOUT_MS)
    chip = page.locator("#chip-engine")
    if wait_for_snapshot:
        page.wait_for_selector("#chip-engine[data-snapshot]", state="attached", timeout=BOOT_TIMEOUT_MS)
        assert chip.get_attribute("data-snapshot") == "stored"
    text = page.get_attribute("#check-report", "data-result")
    return text, chip.get_attribute("data-started"), json.loads(chip.get_attribute("data-boot-log")), page


def test_second_visit_restores_and_bad_snapshots_fall_back(new_context, server):
    context = new_context()
    plain, started, log, page = visit(context, server.url, wait_for_snapshot=True)
    assert started == "plain" and log == []
    assert isinstance(json.loads(plain), dict) and json.loads(plain)
    keys = page.evaluate(KEYS_JS, CACHE)
    build = json.loads(page.evaluate("fetch('build-info.json').then((r) => r.text())"))
    assert [key.rsplit("/", 1)[1] for key in keys] == [build["snapshot"]]
    page.close()

    # Second visit: from the snapshot, and the demo rig's check JSON is the plain start's,
    # character for character (common practice, no source: same code, same input).
    restored, started, log, page = visit(context, server.url, wait_for_snapshot=False)
    assert started == "snapshot", log
    assert restored == plain
    # A good snapshot stays for the next visit.
    assert page.evaluate(KEYS_JS, CACHE) == keys

    # A damaged snapshot under the right key: plain start, same JSON, and a fresh snapshot.
    page.evaluate(ALTER_JS, [CACHE, "corrupt"])
    page.close()
    again, started, log, page = visit(context, server.url, wait_for_snapshot=True)
    assert started == "plain"
    assert len(log) == 1 and "did not start" in log[0] and "deleted" in log[0], log
    assert again == plain
    assert page.evaluate(KEYS_JS, CACHE) == keys  # the bad one deleted, a good one stored

    # A snapshot of another build (key mismatch): deleted unread, plain start, same JSON.
    assert [key.rsplit("/", 1)[1] for key in page.evaluate(ALTER_JS, [CACHE, "rekey"])] \
        == ["314.0.7-another-build"]
    page.close()
    other, started, log, page = visit(context, server.url, wait_for_snapshot=True)
    assert started == "plain"
    assert log == ["Deleted a snapshot of another build; plain start."], log
    assert other == plain
    assert page.evaluate(KEYS_JS, CACHE) == keys
    page.close()


@pytest.mark.parametrize("size", sorted(TOUCH_SIZES))
def test_a_second_visit_on_a_tablet_or_a_phone_starts_from_the_snapshot(new_context, server, size):
    # As above at desktop size: the first visit stores a snapshot, the second starts from it and
    # gives the plain start's check JSON character for character.
    context = new_context(**TOUCH_SIZES[size])
    plain, started, _, page = visit(context, server.url, wait_for_snapshot=True)
    assert started == "plain"
    page.close()
    restored, started, log, page = visit(context, server.url, wait_for_snapshot=False)
    assert started == "snapshot", log
    assert restored == plain
    page.close()


def test_single_file_keeps_its_snapshot_in_the_page(new_context, offline_file):
    """The single file from disk: its data: worker has no storage, so the page keeps the
    snapshot in its own Cache Storage (build_scripts/offline_page.js) and hands it over."""
    context = new_context()
    url = offline_file.as_uri()
    plain, started, log, page = visit(context, url, wait_for_snapshot=True)
    assert started == "plain" and log == []
    keys = page.evaluate(KEYS_JS, CACHE)
    build = json.loads(page.evaluate("fetch('build-info.json').then((r) => r.text())"))
    assert [key.rsplit("/", 1)[1] for key in keys] == [build["snapshot"]]
    page.close()

    # Same code, same input: the same JSON, character for character (common practice, no source).
    restored, started, log, page = visit(context, url, wait_for_snapshot=False)
    assert started == "snapshot", log
    assert restored == plain
    assert page.evaluate(KEYS_JS, CACHE) == keys

    # Another build's snapshot: the worker asks the page to delete it, starts plainly and
    # leaves a good one in its place.
    page.evaluate(ALTER_JS, [CACHE, "rekey"])
    page.close()
    other, started, log, page = visit(context, url, wait_for_snapshot=True)
    assert started == "plain"
    assert log == ["Deleted a snapshot of another build; plain start."], log
    assert other == plain
    assert page.evaluate(KEYS_JS, CACHE) == keys
    page.close()
