// Shakestill page, the composition root: it makes the engine client, the rig on the sheet
// and the panels, and wires each one's events to the others. The work lives in its room:
// engine/ (the worker and talking to it), state/ (the rig, autosave, links, files),
// panels/ (what the page shows and does), lib/ (DOM and trusted-types helpers).
// No physics here: every number shown comes from the core through the worker.

import { h, replaceChildren } from "./lib/dom.js";
import { policy } from "./lib/trusted.js";
import { createCurrentRig } from "./state/current-rig.js";
import { keepPanelInputs } from "./state/panel-inputs.js";
import { draftFromRig } from "./state/draft.js";
import { bootView } from "./engine/boot-view.js";
import { registerServiceWorker } from "./engine/offline-copy.js";
import { EngineClient, startEngineWorkerEarly } from "./engine/worker-client.js";
import { wireSaveButtons } from "./panels/export.js";
import { followEdits } from "./panels/follow-edits.js";
import { mountPanels } from "./panels/mount-panels.js";
import { createNotices, sentence } from "./panels/notices.js";
import { createOpening } from "./panels/opening.js";
import { createReport, showCautions } from "./panels/report-view.js";
import { createRigForm } from "./panels/rig-form.js";
import { wireToolbar } from "./panels/toolbar.js";
import { wireUnits } from "./panels/units-view.js";
import { wireSheetDrawer } from "./panels/sheet-drawer.js";
import { markTerms } from "./panels/terms.js";
import { displayUnits, setDisplayUnits } from "./state/units.js";

// First of all: the engine's start-up takes seconds and needs nothing from the page.
const startWorker = startEngineWorkerEarly(policy);

const $ = (id) => document.getElementById(id);
const { notice, hide: hideNotice, chip } = createNotices($);
const sheet = $("rig-sheet");

const report = createReport($("check-report"), $("verdict-strip"),
  (cautions) => showCautions(document.querySelector(".safety .cautions"), cautions),
  (path) => (String(path).startsWith("spreads") ? $("plan-spreads").focus() : form.focus(path)));

const rig = createCurrentRig({
  render: () => form.render(),
  changed: (delay) => follow.schedule(delay),
  notice,
  chip,
  preview: (on) => {
    sheet.inert = on;
    if (on) sheet.dataset.preview = "link";
    else delete sheet.dataset.preview;
  },
  waiting: (text) => replaceChildren(sheet, h("p", { class: "empty" }, text)),
  history: (canUndo, canRedo) => {
    $("undo").disabled = !canUndo;
    $("redo").disabled = !canRedo;
  },
});

const form = createRigForm(sheet, {
  getDraft: rig.shown,
  onEdit: (path) => { rig.edited(path); follow.edited(); },
  onStructure: (what) => { rig.edited(what); follow.edited(); },
  onFocusSection: rig.focus,
});
sheet.addEventListener("submit", (event) => event.preventDefault());

const engine = new EngineClient(startWorker, {
  ...bootView($, chip, {
    isStarting: () => engine.state === "starting",
    ready: () => opening.engineReady(() => follow.schedule(0)),
    failed: () => {
      report.unavailable();
      // A first visit has no rig yet (the demo comes from the engine): start a blank sheet to type into.
      if (!rig.draft) rig.use(draftFromRig({}));
    },
  }),
  // Python died on one input: the rig on the sheet stays, and is checked again once ready.
  onRestart: (op, message) => {
    chip("chip-engine", "Engine: starting again", "starting");
    notice(`The engine stopped on the ${op} request and is starting again; your rig is kept. `
      + sentence(message));
  },
});

const panels = mountPanels($, {
  engine,
  getRig: rig.current,
  onPick: form.typeOperatingPoint,
  useRig: (fitted) => rig.replace(fitted, null, "The fitted numbers are in the rig sheet"),
  restoreRig: () => { hideNotice(); rig.restorePrevious(); },
  editSpreads: (spreads) => {
    if (!rig.draft) return;
    if (spreads) rig.draft.spreads = spreads;
    else delete rig.draft.spreads;
    rig.edited("spreads");
    follow.edited();
  },
});

const forgetPanelInputs = keepPanelInputs(); // after the panels exist: they hear the restored values
wireSaveButtons();
const follow = followEdits($, { engine, rig, form, report, panels });

const opening = createOpening({
  engine, rig, report, notice, render: () => form.render(), untouched: follow.untouched,
});

rig.restoreSaved();
opening.start();

wireToolbar($, {
  engine, form, notice,
  replaceRig: rig.replace,
  undo: rig.undo,
  redo: rig.redo,
  lastCheck: rig.lastCheck,
  loadDemo: opening.loadDemo,
  getDraft: () => rig.draft,
  getView: () => ({ ...rig.view, units: displayUnits() }),
});

markTerms();
wireSheetDrawer(document.querySelector(".panel.sheet"), $("sheet-tab"), $("sheet-close"));
wireUnits(document.querySelectorAll('input[name="units"]'), () => {
  rig.unitsChanged(); // the sheet's numbers from a file, the demo or a link, in the new units
  report.rewrite();
  panels.unitsChanged(); // the run-up, plan, loads and fit write their numbers again
  panels.chart.draw(); // a job under way stops and starts again with the new axis
  follow.schedule(0); // the check again: its command-line words in the new units
});

registerServiceWorker({ chip, notice, policy });
window.addEventListener("pagehide", rig.save);

// Automated page tests only (navigator.webdriver is true under Playwright, never for a
// person): the page as on a first visit to the demo rig, without starting Python again, so a
// test module boots the engine once (tests/browser/conftest.py `demo_page`). Cleared: storage
// (and a panel-input save still waiting), the panels' inputs (back to the page's own
// defaults), open dialogs, the notice, the units, the undo history, every panel's work and
// output (panels.forget); then the build's demo rig is loaded and checked as on a first visit
// (a map for another rig is redrawn at once, not after the edit pause).
// tests/browser/test_reset_first_visit.py compares a reset page with a freshly booted one.
if (navigator.webdriver) {
  window.shakestillResetForTests = async () => {
    localStorage.clear();
    sessionStorage.clear();
    for (const dialog of document.querySelectorAll("dialog[open]")) dialog.close();
    hideNotice();
    setDisplayUnits("metric");
    for (const el of document.querySelectorAll("[data-keep]")) {
      if (el.type === "radio" || el.type === "checkbox") el.checked = el.defaultChecked;
      else if (el.tagName === "SELECT") for (const o of el.options) o.selected = o.defaultSelected;
      else el.value = el.defaultValue;
      el.dispatchEvent(new Event(el.tagName === "SELECT" || el.type === "radio" || el.type === "checkbox"
        ? "change" : "input", { bubbles: true }));
    }
    forgetPanelInputs(); // the inputs just set would save themselves again after a pause
    localStorage.clear(); // and anything they saved at once
    report.pending();
    rig.forget();
    panels.forget();
    opening.sayEngineStarted(); // the panels' words put back are those from before the engine
    follow.forgetMap();
    await opening.loadFirstDemo();
  };
}
