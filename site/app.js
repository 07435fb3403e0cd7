// Shakestill page, the composition root: the rig sheet and its draft (autosave, the
// previous rig), the engine worker, and the panels (verdict, sketch, map, run-up, motion,
// tolerance, loads, fit, toolbar) wired together. No physics here: every number shown
// comes from the core through the worker. Each concern lives in its own module:
// engine/ (worker, boot, offline copy), state/ (draft, storage, links, files),
// panels/ (what the page shows), lib/ (DOM and trusted-types helpers).

import { h, replaceChildren } from "./lib/dom.js";
import { policy } from "./lib/trusted.js";
import { draftFromRig, rigFromDraft } from "./state/draft.js";
import { download } from "./state/rig-file.js";
import { clearFragment, currentFragment, peekRig } from "./state/share.js";
import { autosave } from "./state/storage.js";
import { bootView } from "./engine/boot-view.js";
import { registerServiceWorker } from "./engine/offline-copy.js";
import { Cancelled, EngineClient, startEngineWorker } from "./engine/worker-client.js";
import { createChartView } from "./panels/chart-view.js";
import { createFitView } from "./panels/fit-view.js";
import { createLoadsView } from "./panels/loads-view.js";
import { createMotionView } from "./panels/motion-view.js";
import { createNotices, sentence } from "./panels/notices.js";
import { createReport } from "./panels/report-view.js";
import { createRigForm } from "./panels/rig-form.js";
import { createRunupView } from "./panels/runup-view.js";
import { showSchematic } from "./panels/schematic-view.js";
import { createToleranceView } from "./panels/tolerance-view.js";
import { wireToolbar } from "./panels/toolbar.js";

// Long enough to cover a burst of typing, short enough to feel immediate.
const DEBOUNCE_MS = 250;
// The map takes seconds of engine time: wait this long after the last edit before redrawing it.
const CHART_DEBOUNCE_MS = 2500;

const $ = (id) => document.getElementById(id);
const { notice, hide: hideNotice, chip } = createNotices($);

const state = {
  draft: null, // what the sheet holds: texts as typed
  preview: null, // a link's rig shown (read-only) until the engine has checked the link
  view: { v: 1, focus: "pendulum" },
  seq: 0, // bumps on every edit; replies for older drafts are ignored
  timer: 0,
  chartTimer: 0, // the map waits for a pause in editing
  mapDrawn: false,
};

const report = createReport($("check-report"), $("verdict-strip"), showCautions);

/** The core's cautions (the same words as the command line) replace the page's opening list. */
function showCautions(cautions) {
  const list = document.querySelector(".safety .cautions");
  if (list.dataset.source === "core") return;
  replaceChildren(list, cautions.map((text) => h("li", {}, text)));
  list.dataset.source = "core";
}
const form = createRigForm($("rig-sheet"), {
  getDraft: () => state.preview || state.draft,
  onEdit: edited,
  onStructure: edited,
  onFocusSection: (section) => {
    state.view.focus = section;
    save();
  },
});
$("rig-sheet").addEventListener("submit", (event) => event.preventDefault());

// ---------------------------------------------------------------- draft and autosave

function save() {
  if (!state.draft) return;
  const ok = autosave.save(state.draft, state.view);
  chip("chip-autosave", ok ? "Autosave: on" : "Autosave: off (this browser blocks storage; save a rig file)",
    ok ? "on" : "off");
}

function useDraft(draft, view = null) {
  state.draft = draft;
  if (view && typeof view === "object") state.view = { ...state.view, ...view };
  form.render();
  save();
  schedule(0);
  const section = document.querySelector(`[data-section="${CSS.escape(state.view.focus || "")}"]`);
  if (view && section) section.scrollIntoView({ block: "start" });
}

/** Replace the rig with another one, keeping the current one as "previous". */
function replaceRig(rig, view, what) {
  const had = state.draft;
  if (had) autosave.keepPrevious(had, state.view);
  useDraft(draftFromRig(rig), view);
  notice(`${what}.`, had ? [{ label: "Bring back my previous rig", run: restorePrevious }] : []);
}

function restorePrevious() {
  const previous = autosave.previous();
  if (!previous) return;
  autosave.keepPrevious(state.draft, state.view);
  useDraft(previous.draft, previous.view);
  notice("Your previous rig is back (the one you just left is kept as previous).",
    [{ label: "Swap back", run: restorePrevious }]);
}

function edited() {
  save();
  schedule(DEBOUNCE_MS);
}

// ---------------------------------------------------------------- engine

const engine = new EngineClient(() => startEngineWorker(policy), {
  ...bootView($, chip, {
    isStarting: () => engine.state === "starting",
    ready: () => engineReady(),
    failed: () => {
      report.unavailable();
      // A first visit has no rig yet (the demo comes from the engine): start a blank sheet to type into.
      if (!state.draft) useDraft(draftFromRig({}));
    },
  }),
  // Python died on one input: the rig on the sheet stays, and is checked again once ready.
  onRestart: (op, message) => {
    chip("chip-engine", "Engine: starting again", "starting");
    notice(`The engine stopped on the ${op} request and is starting again; your rig is kept. `
      + sentence(message));
  },
});

const chart = createChartView({
  holder: $("stability-chart"),
  progress: $("chart-progress"),
  status: $("chart-status"),
  cancel: $("chart-cancel"),
  redraw: $("chart-redraw"),
  axisInputs: document.querySelectorAll('input[name="chart-axis"]'),
  readout: $("chart-readout"),
  note: $("chart-note"),
}, { engine, onPick: pickOperatingPoint });

const currentRig = () => state.draft && rigFromDraft(state.draft);

const runup = createRunupView({
  form: $("runup-form"),
  rate: $("runup-rate"),
  start: $("runup-start"),
  factor: $("runup-factor"),
  messages: $("runup-messages"),
  out: $("runup-result"),
}, { engine, getRig: currentRig });

const motion = createMotionView({
  form: $("motion-form"),
  start: $("motion-start"),
  angle: $("motion-angle"),
  duration: $("motion-duration"),
  knock: $("motion-knock"),
  knockGo: $("motion-knock-go"),
  status: $("motion-status"),
  progress: $("motion-progress"),
  cancel: $("motion-cancel"),
  anim: $("motion-anim"),
  play: $("motion-play"),
  time: $("motion-time"),
  clock: $("motion-clock"),
  slow: $("motion-slow"),
  strobe: $("motion-strobe"),
  events: $("motion-events"),
  plot: $("motion-plot"),
  msgs: { angle: $("motion-angle-msg"), duration: $("motion-duration-msg"), knock: $("motion-knock-msg") },
}, { engine, getRig: currentRig });

const tolerance = createToleranceView({
  go: $("tolerance-go"),
  basinGo: $("basin-go"),
  size: $("basin-size"),
  cancel: $("tolerance-cancel"),
  progress: $("tolerance-progress"),
  status: $("tolerance-status"),
  out: $("tolerance-result"),
  basin: $("basin-map"),
}, { engine, getRig: currentRig });

const fit = createFitView({
  form: $("fit-form"),
  file: $("fit-file"),
  sample: $("fit-sample"),
  log: $("fit-log"),
  source: $("fit-log-source"),
  msgs: $("fit-log-msgs"),
  stopped: $("fit-stopped"),
  go: $("fit-go"),
  cancel: $("fit-cancel"),
  progress: $("fit-progress"),
  status: $("fit-status"),
  out: $("fit-result"),
  plot: $("fit-plot"),
  apply: $("fit-apply"),
  applyNote: $("fit-apply-note"),
  undo: $("fit-undo"),
}, {
  engine,
  getRig: currentRig,
  useRig: (rig) => replaceRig(rig, null, "The fitted numbers are in the rig sheet"),
  restoreRig: () => { hideNotice(); restorePrevious(); },
});

const loads = createLoadsView({ go: $("loads-go"), out: $("loads-result") },
  { engine, getRig: currentRig, getEquilibrium: () => motion.reference });

/** A point picked on the map becomes the operating point: typed into the sheet like an edit. */
function pickOperatingPoint({ speed_rpm, stroke_m }) {
  const put = (path, text) => {
    const input = document.querySelector(`#rig-sheet [data-path="${path}"]`);
    if (!input) return;
    input.value = text;
    input.dispatchEvent(new Event("input", { bubbles: true }));
  };
  put("drive.speed_rpm", `${speed_rpm} rpm`);
  if (stroke_m !== undefined) put("drive.stroke_m", `${Number((stroke_m * 1000).toFixed(6))} mm`);
}

/** The map follows the rig, a few seconds after the last edit that changes it. */
function mapFollows(rig) {
  runup.rigChanged();
  motion.rigChanged(rig);
  tolerance.rigChanged(rig);
  loads.rigChanged(rig);
  fit.rigChanged(rig);
  if (!chart.setRig(rig)) return;
  clearTimeout(state.chartTimer);
  chart.stop();
  state.chartTimer = setTimeout(() => chart.draw(), state.mapDrawn ? CHART_DEBOUNCE_MS : 0);
  state.mapDrawn = true;
}

function schedule(delay) {
  $("share-box").value = ""; // a link made before this change no longer holds the rig on the sheet
  clearTimeout(state.timer);
  state.seq += 1;
  report.pending();
  state.timer = setTimeout(compute, delay);
}

function ignoreCancel(err) {
  if (!(err instanceof Cancelled)) throw err;
}

/** Ask for the sketch and the check of the current draft; newer edits supersede both. */
function compute() {
  if (!state.draft || engine.state === "failed") return;
  const seq = state.seq;
  const rig = rigFromDraft(state.draft);
  const current = () => seq === state.seq;

  engine.request("schematic", { rig }, { channel: "schematic" }).then((reply) => {
    if (!current()) return;
    if (reply.ok) {
      showSchematic($("schematic"), reply.svg);
      $("schematic").dataset.state = "fresh";
      $("schematic-stale").hidden = true;
    } else {
      $("schematic").dataset.state = "stale";
      $("schematic-stale").hidden = $("schematic").querySelector("svg") === null;
      if (reply.problems) form.showProblems(reply.problems);
    }
  }).catch(ignoreCancel).catch((err) => {
    if (current()) $("schematic-stale").hidden = false;
    console.error(err);
  });

  mapFollows(rig);
  report.running();
  engine.request("check", { rig }, {
    channel: "check",
    onProgress: (p) => current() && report.progress(p),
  }).then((reply) => {
    if (!current()) return;
    if (reply.ok) {
      form.showProblems([], reply.warnings || []);
      report.show(reply);
      autosave.keepCheck(rig, reply);
      chart.setOperatingPoint(reply.result);
      motion.setOperatingPoint(reply.result);
    } else if (reply.problems) {
      form.showProblems(reply.problems, reply.warnings || []);
      report.stale(reply.problems);
    } else {
      report.failed(reply.error || "the engine gave no reason");
    }
  }).catch(ignoreCancel).catch((err) => {
    if (current()) report.failed(err.message || String(err));
  });
}

// ---------------------------------------------------------------- start-up

/** The rig in a share link: decoded by the core; a bad link leaves the rig alone. */
/** A link's rig in the sheet at once, read-only until the engine has decoded and checked it. */
async function previewLinkedRig() {
  const fragment = currentFragment();
  const rig = fragment ? await peekRig(fragment) : null;
  if (!rig || engine.state !== "starting" || currentFragment() !== fragment) return;
  state.preview = draftFromRig(rig);
  $("rig-sheet").inert = true;
  $("rig-sheet").dataset.preview = "link";
  form.render();
}

function endPreview() {
  if (!state.preview) return;
  state.preview = null;
  $("rig-sheet").inert = false;
  delete $("rig-sheet").dataset.preview;
  if (state.draft) form.render();
  else replaceChildren($("rig-sheet"), h("p", { class: "empty" }, "The demo rig loads now."));
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
  endPreview();
  if (reply.ok) {
    replaceRig(reply.rig, reply.view, "Opened the rig from the link");
    return;
  }
  const why = reply.problems ? reply.problems.map((p) => sentence(p.message)).join(" ") : sentence(reply.error);
  notice(`This link could not be opened, so your rig is unchanged. ${why}`.trim());
  if (!state.draft) await loadDemo(false);
}

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
  } else if (announce && state.draft) {
    replaceRig(reply.rig, null, "Started from the demo rig");
  } else {
    useDraft(draftFromRig(reply.rig));
  }
}

/** Words that waited for the engine ("... once the engine has started") say what comes next,
 * unless a panel has already replaced them with its own. */
function sayEngineStarted() {
  for (const node of document.querySelectorAll("[data-ready-text]")) {
    if (node.textContent.includes("once the engine has started")) node.textContent = node.dataset.readyText;
  }
}

function engineReady() {
  sayEngineStarted();
  const fragment = currentFragment();
  if (fragment) openFragment(fragment);
  else if (!state.draft) loadDemo(false);
  else schedule(0);
}

window.addEventListener("hashchange", () => {
  const fragment = currentFragment();
  if (fragment && engine.state === "ready") openFragment(fragment);
});

/** The last session's rig; a damaged autosave is set aside (never overwritten) and offered. */
function restoreAutosave() {
  const saved = autosave.load();
  if (saved) {
    try {
      rigFromDraft(saved.draft); // throws on a draft of the wrong shape
      state.draft = saved.draft;
      if (saved.view && typeof saved.view === "object") state.view = { ...state.view, ...saved.view };
      form.render();
      return;
    } catch {
      state.draft = null;
      autosave.setAside(true);
    }
  } else if (!autosave.setAside()) {
    replaceChildren($("rig-sheet"), h("p", { class: "empty" }, "The demo rig loads when the engine has started."));
    return;
  }
  replaceChildren($("rig-sheet"), h("p", { class: "empty" }, "The demo rig loads when the engine has started."));
  notice("The rig saved in this browser last time could not be read (it is damaged), so the demo "
    + "rig is shown instead. The damaged copy is kept: download it to look at it or send it to us.",
  [{ label: "Download the damaged copy", run: () => download("shakestill-damaged-autosave.txt", autosave.damagedText()) }]);
}
restoreAutosave();

/** A verdict at once, marked for what it is, while Python starts: the last visit's for this
 * same rig, or the demo rig's worked out when the page was built. */
async function showCachedVerdict() {
  if (currentFragment()) return; // the sheet shows the link's rig: no other rig's result
  if (state.draft) {
    const last = autosave.checkFor(rigFromDraft(state.draft));
    if (last && !state.seq) report.showCached(last, "last-visit");
    return;
  }
  if (currentFragment()) return;
  let cached = null;
  try {
    const response = await fetch("demo-check.json");
    cached = response.ok ? await response.json() : null;
  } catch {
    return; // no cached verdict: the engine's own comes when it has started
  }
  if (!cached || state.draft || engine.state !== "starting") return;
  state.draft = draftFromRig(cached.rig);
  form.render();
  save();
  report.showCached(cached.reply, "build");
}
showCachedVerdict();
if (!autosave.available()) chip("chip-autosave", "Autosave: off (this browser blocks storage; save a rig file)", "off");
if (currentFragment()) {
  notice("The rig from the link is shown below; it can be edited once the engine has started "
    + "and checked it.");
  previewLinkedRig();
}

// ---------------------------------------------------------------- toolbar

wireToolbar($, {
  engine, form, notice, replaceRig, loadDemo,
  getDraft: () => state.draft,
  getView: () => state.view,
});

// ---------------------------------------------------------------- offline copy

registerServiceWorker({ chip, notice, policy });
window.addEventListener("pagehide", save);
