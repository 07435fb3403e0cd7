// Shakestill page: wires the rig sheet, the engine worker, the verdict, the
// sketch, share links, rig files and autosave. No physics here: every number
// shown comes from the core through the worker.

import { h, replaceChildren } from "./dom.js";
import { draftFromRig, rigFromDraft } from "./draft.js";
import { fileNameFor, download, readRigFile } from "./rig-file.js";
import { createChartView } from "./chart-view.js";
import { createFitView } from "./fit-view.js";
import { createLoadsView } from "./loads-view.js";
import { createMotionView } from "./motion-view.js";
import { createReport } from "./report-view.js";
import { createRigForm } from "./rig-form.js";
import { createRunupView } from "./runup-view.js";
import { showSchematic } from "./schematic-view.js";
import { clearFragment, copyText, currentFragment, linkFor } from "./share.js";
import { autosave } from "./storage.js";
import { policy } from "./trusted.js";
import { createToleranceView } from "./tolerance-view.js";
import { Cancelled, EngineClient, startEngineWorker } from "./worker-client.js";

// Long enough to cover a burst of typing, short enough to feel immediate.
const DEBOUNCE_MS = 250;
// The map takes seconds of engine time: wait this long after the last edit before redrawing it.
const CHART_DEBOUNCE_MS = 2500;
// No start-up news for this long means the start has stalled (e.g. a blocked download).
const STALLED_BOOT_MS = 60_000;

const $ = (id) => document.getElementById(id);

const state = {
  draft: null, // what the sheet holds: texts as typed
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
  getDraft: () => state.draft,
  onEdit: edited,
  onStructure: edited,
  onFocusSection: (section) => {
    state.view.focus = section;
    save();
  },
});
$("rig-sheet").addEventListener("submit", (event) => event.preventDefault());

// ---------------------------------------------------------------- notices

/** The core's words as a sentence: capital first letter, full stop at the end. */
function sentence(text) {
  const t = String(text || "").trim();
  if (!t) return "";
  return t.charAt(0).toUpperCase() + t.slice(1) + (/[.!?]$/.test(t) ? "" : ".");
}

function notice(text, actions = []) {
  $("notice-text").textContent = text;
  replaceChildren($("notice-actions"),
    actions.map(({ label, run }) => h("button", { type: "button", on: { click: () => { hideNotice(); run(); } } }, label)),
    h("button", { type: "button", class: "quiet", on: { click: hideNotice } }, "Dismiss"));
  $("notice").hidden = false;
}

function hideNotice() {
  $("notice").hidden = true;
}

function chip(id, text, chipState) {
  const node = $(id);
  node.textContent = text;
  node.dataset.state = chipState;
}

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

let stallTimer = 0;
function watchBoot(stage) {
  clearTimeout(stallTimer);
  stallTimer = setTimeout(() => {
    if (engine.state !== "starting") return;
    $("boot-failed").hidden = false;
    $("boot-failed-reason").textContent = `The engine has made no progress for a minute, at the step "${stage}".`;
    $("boot-failed-advice").textContent = "Part of it may be blocked or very slow to download (a proxy or "
      + "filter on managed networks can do this). Wait a little longer, or reload; after one complete "
      + "visit the page works offline.";
    chip("chip-engine", "Engine: stalled", "failed");
  }, STALLED_BOOT_MS);
}
watchBoot("opening");

const engine = new EngineClient(() => startEngineWorker(policy), {
  onBoot: ({ stage, fraction }) => {
    watchBoot(stage || "starting");
    $("boot-stage").textContent = stage || "starting";
    if (Number.isFinite(fraction)) $("boot-progress").value = fraction;
    chip("chip-engine", `Engine: starting ${Math.round((fraction || 0) * 100)}%`, "starting");
  },
  onReady: (version) => {
    clearTimeout(stallTimer);
    $("boot").hidden = true;
    $("boot-failed").hidden = true;
    $("version").textContent = `engine ${version}`;
    chip("chip-engine", `Engine: ready (${version})`, "ready");
    engineReady();
  },
  onFail: (message, wasReady) => {
    clearTimeout(stallTimer);
    $("boot").hidden = true;
    $("boot-failed").hidden = false;
    $("boot-failed-reason").textContent = wasReady ? `The engine stopped: ${message}` : message;
    $("boot-failed-advice").textContent = adviceFor(message);
    chip("chip-engine", "Engine: not running", "failed");
    report.unavailable();
    // A first visit has no rig yet (the demo comes from the engine): start a blank sheet to type into.
    if (!state.draft) useDraft(draftFromRig({}));
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

/** Plain advice for a failed start, from what the browser can and cannot do. */
function adviceFor(message) {
  if (typeof WebAssembly !== "object") {
    return "This browser has WebAssembly switched off or missing (some managed laptops do this). "
      + "Ask your IT department to allow WebAssembly for this page, or use another browser.";
  }
  if (typeof Worker !== "function") return "This browser cannot run background workers, which the engine needs.";
  if (location.protocol === "file:") {
    return "Opened from disk: use the file shakestill-offline.html, which is built to run from a file, "
      + "or open the site's web address.";
  }
  if (/fetch|network|HTTP|load/i.test(message)) {
    return "Part of the engine could not be downloaded. Check the connection and reload; "
      + "after one complete visit the page also works offline.";
  }
  return "Reload the page. If it keeps failing, the browser's settings may block WebAssembly or workers.";
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
async function openFragment(fragment) {
  clearFragment();
  let reply;
  try {
    reply = await engine.request("share_decode", { fragment });
  } catch (err) {
    if (err instanceof Cancelled) return;
    reply = { ok: false, error: err.message };
  }
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

function engineReady() {
  const fragment = currentFragment();
  if (fragment) openFragment(fragment);
  else if (!state.draft) loadDemo(false);
  else schedule(0);
}

window.addEventListener("hashchange", () => {
  const fragment = currentFragment();
  if (fragment && engine.state === "ready") openFragment(fragment);
});

const saved = autosave.load();
if (saved) {
  state.draft = saved.draft;
  if (saved.view) state.view = { ...state.view, ...saved.view };
  form.render();
} else {
  replaceChildren($("rig-sheet"), h("p", { class: "empty" }, "The demo rig loads when the engine has started."));
}
if (!autosave.available()) chip("chip-autosave", "Autosave: off (this browser blocks storage; save a rig file)", "off");
if (currentFragment()) notice("Opening the rig from the link once the engine has started.");

// ---------------------------------------------------------------- toolbar

$("load-demo").addEventListener("click", () => loadDemo(true));

$("save-file").addEventListener("click", async () => {
  if (!state.draft) return;
  const asTyped = rigFromDraft(state.draft);
  const name = fileNameFor(state.draft.title);
  let reply = null;
  try {
    reply = await engine.request("validate", { rig: asTyped });
  } catch (err) {
    if (err instanceof Cancelled) return;
  }
  if (reply && reply.ok) {
    download(name, `${JSON.stringify(reply.rig, null, 2)}\n`);
    notice(`Saved ${name} (all values in SI units).`);
  } else {
    download(name, `${JSON.stringify(asTyped, null, 2)}\n`);
    notice(reply
      ? `Saved ${name} as typed, with ${reply.problems ? reply.problems.length : "some"} problem(s) still marked; `
        + "Shakestill points them out again when you open it."
      : `Saved ${name} as typed; the engine has not checked it yet.`);
  }
});

$("open-file").addEventListener("change", async (event) => {
  const file = event.target.files[0];
  event.target.value = "";
  if (!file) return;
  const { rig, problem } = await readRigFile(file);
  if (problem) notice(`${problem} Your rig is unchanged.`);
  else replaceRig(rig, null, `Opened ${file.name}`);
});

$("copy-link").addEventListener("click", async () => {
  if (!state.draft) return;
  let reply;
  try {
    reply = await engine.request("share_encode", { rig: rigFromDraft(state.draft), view: state.view });
  } catch (err) {
    if (!(err instanceof Cancelled)) notice(`No link: ${err.message}`);
    return;
  }
  if (!reply.ok) {
    const why = reply.problems ? "fix the marked fields first." : reply.error;
    if (reply.problems) form.showProblems(reply.problems);
    notice(`No link yet: ${why}`);
    return;
  }
  const link = linkFor(reply.fragment);
  const box = $("share-box");
  box.value = link;
  const copied = await copyText(link, box);
  notice(copied ? "Link copied. It holds the whole rig; nothing is sent to a server."
    : "The link is selected in the box beside the button: copy it from there.");
});

$("print-report").addEventListener("click", () => window.print());

// ---------------------------------------------------------------- offline copy

async function registerServiceWorker() {
  if (location.protocol === "file:") {
    chip("chip-offline", "Offline: this file works without a network", "on");
    return;
  }
  if (!("serviceWorker" in navigator)) {
    chip("chip-offline", "Offline copy: not available in this browser", "off");
    return;
  }
  try {
    const registration = await navigator.serviceWorker.register(policy.createScriptURL(
      new URL("sw.js", document.baseURI).href));
    await navigator.serviceWorker.ready;
    chip("chip-offline", "Offline copy: ready", "on");
    document.documentElement.dataset.offline = "ready";
    const offerUpdate = () => {
      if (!registration.waiting || !navigator.serviceWorker.controller) return;
      notice("A newer version of Shakestill is ready.", [{
        label: "Reload to use it",
        run: () => {
          document.documentElement.dataset.updating = "yes";
          registration.waiting.postMessage({ type: "skip-waiting" });
        },
      }]);
    };
    offerUpdate();
    registration.addEventListener("updatefound", () => {
      registration.installing?.addEventListener("statechange", offerUpdate);
    });
    let reloaded = false;
    navigator.serviceWorker.addEventListener("controllerchange", () => {
      if (reloaded || !document.documentElement.dataset.updating) return;
      reloaded = true;
      location.reload();
    });
  } catch (err) {
    chip("chip-offline", "Offline copy: not available here", "off");
    console.warn("service worker:", err);
  }
}

registerServiceWorker();
window.addEventListener("pagehide", save);
