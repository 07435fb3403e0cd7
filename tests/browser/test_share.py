"""Share links: the rig and view travel in the URL fragment; a fresh browser
restores them exactly; a tampered link is refused and the rig stays.

The sender's link is made once for the module (`sent`, on the module's booted page); the pages
that open it from a fresh browser boot cold, the ones that hold a rig of their own take the
reset `demo_page`."""

from __future__ import annotations

import json

import pytest
import shakestill as ss  # the core on CPython: the independent reading

from pagekit import make_link, open_page, shot, wait_for_result, wait_for_rig

pytestmark = pytest.mark.browser


@pytest.fixture(scope="module")
def sent(booted_pages):
    """The sender's side, made once for the module on a booted page (conftest's BootedPages,
    reset; the next test that takes it gets it reset again): the demo rig edited, its check,
    the rig as the core read it, and its share link."""
    page = booted_pages.take()
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="title"]', "Exhibit pendulum, hall 2")
    page.fill('[data-path="drive.stroke_m"]', "22.5 mm")
    page.fill('[data-path="links[0].joint_damping_N_m_s"]', "0.0003 N m s")
    result = wait_for_result(page, old)
    rig = json.loads(page.get_attribute("#check-report", "data-rig"))
    return {"result": result, "rig": rig, "link": make_link(page)}


def test_share_link_restores_the_rig_in_a_fresh_browser(new_context, server, sent):
    result, rig, link = sent["result"], sent["rig"], sent["link"]
    assert link.startswith(server.url)

    receiver = new_context().new_page()  # no storage shared with the sender
    got = open_page(receiver, link)
    # Exactly the same rig as the core read it, and so exactly the same check.
    assert json.loads(receiver.get_attribute("#check-report", "data-rig")) == rig
    assert got == result
    assert receiver.input_value('[data-path="title"]') == "Exhibit pendulum, hall 2"
    # The independent reading of the same rig by the core on CPython.
    want = ss.rig_to_dict(ss.rig_from_dict(rig))
    assert json.loads(receiver.get_attribute("#check-report", "data-rig")) == want
    # The link is taken off the address bar once opened (the autosave holds the rig).
    assert "#" not in receiver.url
    shot(receiver, "laptop-opened-from-link")


def test_tampered_link_is_refused_and_rig_untouched(new_context, server, sent, demo_page):
    base, fragment = sent["link"].split("#", 1)
    middle = len(fragment) // 2
    flipped = "A" if fragment[middle] != "A" else "B"
    tampered = f"{base}#{fragment[:middle]}{flipped}{fragment[middle + 1:]}"

    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="title"]', "My own rig")
    wait_for_result(page, old)  # the title is part of the result
    rig_before = page.get_attribute("#check-report", "data-rig")
    result_before = page.get_attribute("#check-report", "data-result")

    page.goto(tampered)  # same page, new fragment: the hashchange path
    page.wait_for_selector("#notice:not([hidden])", timeout=60_000)
    assert "could not be opened" in page.inner_text("#notice-text")
    assert page.input_value('[data-path="title"]') == "My own rig"
    assert page.get_attribute("#check-report", "data-rig") == rig_before
    assert page.get_attribute("#check-report", "data-result") == result_before
    shot(page, "laptop-tampered-link")

    # Opened cold in a fresh browser, the bad link also says why, and the demo rig loads instead.
    cold = new_context().new_page()
    cold.goto(tampered)
    cold.wait_for_function("() => document.getElementById('notice-text').textContent.includes('could not be opened')",
                           timeout=120_000)
    wait_for_result(cold)
    assert json.loads(cold.get_attribute("#check-report", "data-rig")) == ss.rig_to_dict(ss.demo_rig())


def test_opening_a_link_keeps_the_previous_rig_to_bring_back(server, sent, demo_page):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="title"]', "Bench rig, my own")
    page.fill('[data-path="drive.speed_rpm"]', "2650 rpm")
    mine = wait_for_result(page, old)
    page.goto(sent["link"])
    wait_for_rig(page, "hall 2")
    page.get_by_role("button", name="Bring back my previous rig").click()
    back = wait_for_rig(page, "my own")
    assert back == mine
    assert page.input_value('[data-path="drive.speed_rpm"]') == "2650 rpm"  # the text as typed


def test_a_links_rig_is_in_the_sheet_before_the_engine_has_started(new_context, server, sent):
    page = new_context().new_page()  # cold: the sheet before the engine has started
    page.goto(sent["link"])
    # decoded in the page for display, read-only, long before Python has started
    page.wait_for_function("() => document.getElementById('rig-sheet').dataset.preview === 'link'",
                           timeout=10_000)
    assert page.input_value('[data-path="title"]') == "Exhibit pendulum, hall 2"
    assert page.evaluate("document.getElementById('rig-sheet').inert") is True
    assert page.get_attribute("#chip-engine", "data-state") != "ready"
    # the only result it may show before its own is the sender's, for this same rig
    if page.get_attribute("#check-report", "data-state") == "cached":
        assert page.get_attribute("#check-report", "data-source") == "link"
        assert json.loads(page.get_attribute("#check-report", "data-result"))["title"] == \
            "Exhibit pendulum, hall 2"
    result = wait_for_result(page)
    assert result["title"] == "Exhibit pendulum, hall 2"
    assert page.evaluate("document.getElementById('rig-sheet').inert") is False
    assert page.get_attribute("#rig-sheet", "data-preview") is None


def test_a_link_carries_the_senders_result_for_that_rig(new_context, server, sent):
    # The sender's page checked the rig; the link carries that result, and the receiving page
    # shows it at once marked as the sender's (data-state cached, data-source link) until its
    # own engine's result replaces it, which must be the same numbers (the same core).
    link, sent = sent["link"], sent["result"]
    page = new_context().new_page()  # cold: the sender's result before the engine's own
    page.goto(link)
    page.wait_for_function("() => document.getElementById('check-report').dataset.state"
                           " === 'cached'", timeout=10_000)
    assert page.get_attribute("#check-report", "data-source") == "link"
    assert page.get_attribute("#chip-engine", "data-state") != "ready"
    shown = json.loads(page.get_attribute("#check-report", "data-result"))
    assert shown == sent
    fresh = wait_for_result(page)
    assert page.get_attribute("#check-report", "data-state") == "fresh"
    assert fresh == sent
