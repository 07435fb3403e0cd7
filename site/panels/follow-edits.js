// An edit on the sheet, followed through: after a pause in typing the sketch and the check
// are asked for, the report shows progress then the verdict, every panel hears of the new
// rig, and the map redraws a few seconds after the last edit. Newer edits supersede older
// replies (a sequence number), and the engine's cancellation is not an error.

import { displayUnits } from "../state/units.js";
import { Cancelled } from "../engine/worker-client.js";
import { showSchematic } from "./schematic-view.js";

// Long enough to cover a burst of typing, short enough to feel immediate.
const DEBOUNCE_MS = 250;
// The map takes seconds of engine time: wait this long after the last edit before redrawing it.
const CHART_DEBOUNCE_MS = 2500;

function ignoreCancel(err) {
  if (!(err instanceof Cancelled)) throw err;
}

/** ``page`` gives: engine, rig (state/current-rig), form, report, panels (mount-panels). */
export function followEdits($, { engine, rig, form, report, panels }) {
  let seq = 0; // bumps on every change; replies for older drafts are ignored
  let timer = 0;
  let chartTimer = 0;
  let mapDrawn = false;

  function schedule(delay) {
    $("share-box").value = ""; // a link made before this change no longer holds the rig on the sheet
    clearTimeout(timer);
    seq += 1;
    report.pending();
    timer = setTimeout(compute, delay);
  }

  function mapFollows(current) {
    if (!panels.rigChanged(current)) return;
    clearTimeout(chartTimer);
    panels.chart.stop();
    chartTimer = setTimeout(() => panels.chart.draw(), mapDrawn ? CHART_DEBOUNCE_MS : 0);
    mapDrawn = true;
  }

  /** The scale sketch; ``leanDeg`` (the check's inverted lean per link, off vertical) draws
   * the links at the held orbit's mean lean. */
  function sketch(current, isCurrent, leanDeg = null) {
    const holder = $("schematic");
    const request = { rig: current, units: displayUnits(), ...(leanDeg ? { lean_deg: leanDeg } : {}) };
    engine.request("schematic", request, { channel: "schematic" }).then((reply) => {
      if (!isCurrent()) return;
      if (reply.ok) {
        showSchematic(holder, reply.svg);
        holder.dataset.state = "fresh";
        $("schematic-stale").hidden = true;
      } else {
        holder.dataset.state = "stale";
        $("schematic-stale").hidden = holder.querySelector("svg") === null;
        if (reply.problems) form.showProblems(reply.problems);
      }
    }).catch(ignoreCancel).catch((err) => {
      if (isCurrent()) $("schematic-stale").hidden = false;
      console.error(err);
    });
  }

  /** Ask for the sketch and the check of the current draft. */
  function compute() {
    if (!rig.draft || engine.state === "failed") return;
    const mine = seq;
    const isCurrent = () => mine === seq;
    const current = rig.current();
    sketch(current, isCurrent);
    mapFollows(current);
    report.running();
    engine.request("check", { rig: current, units: displayUnits() }, {
      channel: "check",
      onProgress: (p) => isCurrent() && report.progress(p),
    }).then((reply) => {
      if (!isCurrent()) return;
      if (reply.ok) {
        form.showProblems([], reply.warnings || []);
        panels.problems([]);
        report.show(reply);
        rig.keepCheck(current, reply);
        panels.checked(reply.result);
        const lean = reply.result.inverted && reply.result.inverted.lean_deg;
        if (Array.isArray(lean)) sketch(current, isCurrent, lean); // redrawn at the lean
      } else if (reply.problems) {
        form.showProblems(reply.problems, reply.warnings || []);
        panels.problems(reply.problems);
        report.stale(reply.problems);
      } else {
        report.failed(reply.error || "the engine gave no reason");
      }
    }).catch(ignoreCancel).catch((err) => {
      if (isCurrent()) report.failed(err.message || String(err));
    });
  }

  return {
    schedule,
    /** A field changed: save at once, check after a pause in typing. */
    edited() {
      rig.save();
      schedule(DEBOUNCE_MS);
    },
    /** Nothing has been asked of the engine yet (a cached verdict may still be shown). */
    untouched: () => seq === 0,
    /** The next rig that needs a new map gets it at once, as on a first visit (the page tests'
     * reset: a map of the rig before must not stay "done" through the redraw's pause). */
    forgetMap() {
      mapDrawn = false;
    },
  };
}
