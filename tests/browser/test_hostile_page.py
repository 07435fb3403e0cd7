"""The page under hostile input: 30 damaged share links and 10 damaged saved states, every
one of them (not a sample), each refused with a clear notice, the page working afterwards
and the user's rig intact; no request leaves the page's own origin; Python dying on an input
restarts the engine and keeps the rig. Common practice, no source."""

from __future__ import annotations

import base64
import json
import zlib

import pytest

from pagekit import BOOT_TIMEOUT_MS, LAPTOP, open_page, shot, wait_for_result

pytestmark = pytest.mark.browser

AUTOSAVE = "shakestill.autosave.v1"
DAMAGED = "shakestill.damaged.v1"


def _pack(payload: str) -> str:
    return "s1." + base64.urlsafe_b64encode(zlib.compress(payload.encode(), 9)).decode().rstrip("=")


def damaged_links(good: str) -> list[str]:
    """Thirty fragments that must all be refused: damage to the text, to the packing, to the
    JSON inside, and well-packed rigs that are not valid."""
    body = good[len("s1."):]
    links = []
    for k in range(10):  # one character changed: zlib's checksum catches it
        at = 4 + (len(body) - 8) * k // 10
        links.append("s1." + body[:at] + ("A" if body[at] != "A" else "B") + body[at + 1:])
    for frac in (0.1, 0.3, 0.5, 0.7, 0.9):  # cut short
        links.append("s1." + body[: int(len(body) * frac)])
    links += ["s1.", "s1.!!!!", "s2." + body, "s1." + body + "%%%", "s1.\u00e9\u00e8" + body]
    rig = json.loads(zlib.decompress(base64.urlsafe_b64decode(body + "=" * (-len(body) % 4))))["rig"]
    links += [_pack('{"rig": {"x": NaN}, "view": {}}'), _pack("[" * 5000 + "]" * 5000),
              _pack('{"rig": {"drive": {"speed_rpm": ' + "9" * 400 + "}}}"),
              _pack('{"rig": 3, "view": {}}'), _pack('{"view": {}}')]
    for change in ({"format": "other"}, {"version": 2}, {"links": []},
                   {"drive": None}, {"limits": {"speed_rpm": [3, 1]}}):
        bad = {**rig, **change}
        links.append(_pack(json.dumps({"rig": {k: v for k, v in bad.items() if v is not None},
                                       "view": {}})))
    assert len(links) == 30
    return links


def test_thirty_damaged_links_are_refused_and_the_rig_stays(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    context = page.context
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="title"]', "My own rig")
    wait_for_result(page, old)
    rig_before = page.get_attribute("#check-report", "data-rig")
    draft_before = json.loads(page.evaluate(f"localStorage.getItem('{AUTOSAVE}')"))["draft"]
    page.click("#copy-link")
    page.wait_for_function("() => document.getElementById('share-box').value.includes('#s1.')")
    good = page.input_value("#share-box").split("#", 1)[1]

    for n, fragment in enumerate(damaged_links(good)):
        page.evaluate("document.getElementById('notice').hidden = true")
        page.goto(f"{server.url}#{fragment}")
        page.wait_for_function("() => !document.getElementById('notice').hidden", timeout=60_000)
        words = page.inner_text("#notice-text")
        assert "could not be opened" in words and "unchanged" in words, (n, fragment, words)
        assert page.input_value('[data-path="title"]') == "My own rig", n
    assert page.get_attribute("#check-report", "data-rig") == rig_before
    assert json.loads(page.evaluate(f"localStorage.getItem('{AUTOSAVE}')"))["draft"] == draft_before
    # the page still works: an edit gives a fresh check
    old = page.get_attribute("#check-report", "data-result")
    page.fill('[data-path="drive.speed_rpm"]', "2600 rpm")
    assert wait_for_result(page, old)["speed_rpm"] == 2600.0
    assert not context.recorder.errors
    shot(page, "laptop-after-thirty-damaged-links")


DAMAGED_STATES = [
    "{", "null", "[]", '{"draft": 3}', '{"draft": {"links": "x"}}',
    '{"draft": {"links": [null], "drive": 5}}', "\u0000\u0001\u0002",
    '{"draft": {"title": "t", "links": [{"point_masses": 7}], "drive": {}}}',
    '{"draft": "a rig", "view": []}', "x" * 50_000,
]


@pytest.fixture(scope="module")
def saved_state_profile(browser, server):
    """One browser profile for the damaged saved states. Its first page leaves the engine's
    snapshot in Cache Storage (site/engine/snapshot.js), so each state's page starts Python
    from it (about 2 s of CPU against 4 for a plain start, measured 2026-12-05); the saved
    state is read by the page before the engine starts either way. Each state's page clears
    the profile's storage before its damaged state goes in."""
    context = browser.new_context(viewport=LAPTOP)
    page = context.new_page()
    open_page(page, server.url)
    page.wait_for_selector("#chip-engine[data-snapshot]", state="attached", timeout=BOOT_TIMEOUT_MS)
    page.close()
    yield context
    context.close()


@pytest.mark.parametrize("text", DAMAGED_STATES, ids=[f"state{i}" for i in range(10)])
def test_a_damaged_saved_state_is_kept_aside_and_the_page_works(saved_state_profile, server, text):
    page = saved_state_profile.new_page()
    errors = []
    page.on("pageerror", lambda err: errors.append(str(err)))
    page.add_init_script(f"""
        try {{
            if (location.origin === {json.dumps(server.origin)} && !sessionStorage.getItem("seeded")) {{
                sessionStorage.setItem("seeded", "1");
                localStorage.clear();  // what the state before left: this visit has only its own
                localStorage.setItem("{AUTOSAVE}", {json.dumps(text)});
            }}
        }} catch (err) {{}}  // documents without storage (about:blank)""")
    try:
        result = open_page(page, server.url)  # the demo rig, checked: the page works
        assert result["title"]
        assert "could not be read" in page.inner_text("#notice-text")
        assert page.evaluate(f"localStorage.getItem('{DAMAGED}')") == text  # nothing lost
        assert not errors
    finally:
        page.close()


def test_no_request_leaves_the_pages_origin_under_every_panels_work(demo_page, server):
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    context = page.context
    # every panel's work: the map (drawn by itself), a motion run, the loads, the knock
    # tolerance, and a fit of the sample log (fetched from the page's own folder)
    page.click("#motion-run")
    page.wait_for_function("() => document.querySelector('#motion-anim').dataset.state === 'fresh'",
                           timeout=120_000)
    page.click("#loads-go")
    page.wait_for_function("() => document.querySelector('#loads-result tr[data-key]') !== null",
                           timeout=120_000)
    page.click("#tolerance-go")
    page.click("#fit-sample")
    page.wait_for_function("() => document.getElementById('fit-log').value.includes('t_s')",
                           timeout=60_000)
    page.click("#fit-go")
    page.wait_for_function("() => document.getElementById('fit-result').dataset.state === 'fresh'",
                           timeout=240_000)
    # this test's requests, and those of the page's boot (made before the module's first test)
    foreign = [u for u in [*page.boot_urls, *context.recorder.urls]
               if not (u.startswith(server.origin) or u.startswith(("data:", "blob:")))]
    assert foreign == []


def test_python_dying_on_an_input_restarts_the_engine_and_keeps_the_rig(demo_page, server):
    """The client's side with a stand-in worker: boots, answers, then reports that Python
    died on the second request; the client rejects that request with the engine's words,
    starts a fresh worker, and requests made meanwhile are answered by the new one."""
    page = demo_page  # one booted page per module, reset (conftest.demo_page)
    got = page.evaluate("""async () => {
        const { EngineClient } = await import("./engine/worker-client.js");
        const { policy } = await import("./lib/trusted.js");
        let started = 0;
        const source = `let n = 0;
            postMessage({type: "ready", version: "stand-in"});
            onmessage = (e) => {
                n += 1;
                if (e.data.op === "die" && self.name === "first")
                    postMessage({id: e.data.id, type: "fatal", op: "die", message: "stack overflow"});
                else postMessage({id: e.data.id, type: "result", reply: {ok: true, n, name: self.name}});
            };`;
        const url = URL.createObjectURL(new Blob([source], {type: "text/javascript"}));
        const restarts = [];
        const client = new EngineClient(() => new Worker(policy.createScriptURL(url),
                                                         {name: started++ ? "second" : "first"}),
            {onRestart: (op, message) => restarts.push([op, message])});
        await new Promise((ok) => setTimeout(ok, 200));
        const first = await client.request("version");
        const died = client.request("die").then(() => "answered", (e) => e.message);
        const after = client.request("version");
        return {first, died: await died, after: await after, restarts, state: client.state};
    }""")
    assert got["first"]["name"] == "first"
    assert "stopped on this die" in got["died"] and "stack overflow" in got["died"]
    assert got["after"]["name"] == "second"  # answered by the fresh worker
    assert got["restarts"] == [["die", "stack overflow"]]
    assert got["state"] == "ready"
