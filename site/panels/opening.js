// What the page shows first and what it opens: a verdict at once while Python starts (the
// last visit's for this same rig, or the demo rig's worked out at build time), a share
// link's rig (previewed read-only, then decoded and checked by the core; a bad link leaves
// the rig alone), the demo rig, and the words that waited for the engine.

import { Cancelled } from "../engine/worker-client.js";
import { clearFragment, currentFragment, peekLink } from "../state/share.js";
import { draftFromRig } from "../state/draft.js";
import { sentence } from "./notices.js";

/** ``page`` gives: engine, rig (state/current-rig), report, notice, render(), untouched(). */
export function createOpening({ engine, rig, report, notice, render, untouched }) {
  async function loadDemo(announce = true) {
    let reply;
    try {
      reply = await engine.request("demo");
    } catch (err) {
      notice(`The demo rig could not be loaded: ${err.message}`);
      return;
    }
    if (!reply.ok) {
      notice(`The demo rig could not be loaded: ${reply.error || "no reason given"}`);
    } else if (announce && rig.draft) {
      rig.replace(reply.rig, null, "Started from the demo rig");
    } else {
      rig.use(draftFromRig(reply.rig));
    }
  }

  /** The demo rig as a first visit has it (the build's copy in demo-check.json, whose key order
   * the autosave and a share link keep), then checked; the engine's own copy if that fails. */
  async function loadFirstDemo() {
    let cached = null;
    try {
      const response = await fetch("demo-check.json");
      cached = response.ok ? await response.json() : null;
    } catch {
      cached = null;
    }
    if (cached && cached.rig) rig.use(draftFromRig(cached.rig));
    else await loadDemo(false);
  }

  async function openFragment(fragment) {
    clearFragment();
    let reply;
    try {
      reply = await engine.request("share_decode", { fragment });
    } catch (err) {
      if (err instanceof Cancelled) return;
      reply = { ok: false, error: err.message };
    }
    rig.endPreview();
    if (reply.ok) {
      rig.replace(reply.rig, reply.view, "Opened the rig from the link");
      return;
    }
    const why = reply.problems ? reply.problems.map((p) => sentence(p.message)).join(" ") : sentence(reply.error);
    notice(`This link could not be opened, so your rig is unchanged. ${why}`.trim());
    if (!rig.draft) await loadDemo(false);
  }

  /** A link's rig in the sheet at once, read-only until the engine has decoded and checked
   * it, with the sender's result for that same rig (if the link carries one) marked as such. */
  async function previewLink() {
    const fragment = currentFragment();
    const linked = fragment ? await peekLink(fragment) : null;
    if (!linked || engine.state !== "starting" || currentFragment() !== fragment) return;
    rig.startPreview(linked.rig);
    if (!linked.result) return;
    try {
      report.showCached(linked.result, "link");
    } catch {
      report.pending(); // a result the page cannot show: wait for the engine's own
    }
  }

  /** A verdict at once, marked for what it is, while Python starts. */
  async function showCachedVerdict() {
    if (currentFragment()) return; // the sheet shows the link's rig: no other rig's result
    if (rig.draft) {
      const last = rig.lastCheck();
      if (last && untouched()) report.showCached(last, "last-visit");
      return;
    }
    let cached = null;
    try {
      const response = await fetch("demo-check.json");
      cached = response.ok ? await response.json() : null;
    } catch {
      return; // no cached verdict: the engine's own comes when it has started
    }
    if (!cached || rig.draft || engine.state !== "starting") return;
    rig.begin(draftFromRig(cached.rig));
    render();
    rig.save();
    report.showCached(cached.reply, "build");
  }

  /** Words that waited for the engine ("... once the engine has started") say what comes
   * next, unless a panel has already replaced them with its own. */
  function sayEngineStarted() {
    for (const node of document.querySelectorAll("[data-ready-text]")) {
      if (node.textContent.includes("once the engine has started")) node.textContent = node.dataset.readyText;
    }
  }

  return {
    loadDemo,
    loadFirstDemo,
    sayEngineStarted,
    /** Before the engine: the cached verdict, or the link's rig previewed. */
    start() {
      showCachedVerdict();
      if (currentFragment()) {
        notice("The rig from the link is shown below; it can be edited once the engine has started "
          + "and checked it.");
        previewLink();
      }
      window.addEventListener("hashchange", () => {
        const fragment = currentFragment();
        if (fragment && engine.state === "ready") openFragment(fragment);
      });
    },
    /** The engine is up: open the link, or the demo on a first visit, or check the sheet. */
    engineReady(checkSheet) {
      sayEngineStarted();
      const fragment = currentFragment();
      if (fragment) openFragment(fragment);
      else if (!rig.draft) loadDemo(false);
      else checkSheet();
    },
  };
}
