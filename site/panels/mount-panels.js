// The work panels (map, run-up, lean chart, motion, tolerance, loads, fit) made on their page elements,
// and the two things every one of them hears: the rig changed, the check has a new result.

import { createChartView } from "./chart-view.js";
import { showMapTable } from "./map-table.js";
import { createFitView } from "./fit-view.js";
import { createLeanView } from "./lean-view.js";
import { createLoadsView } from "./loads-view.js";
import { createMotionView } from "./motion-view.js";
import { createPlanView } from "./plan-view.js";
import { createRunupView } from "./runup-view.js";
import { createToleranceView } from "./tolerance-view.js";
import { keepPristine } from "../lib/pristine.js";

/**
 * ``page`` gives: engine, getRig(), onPick(point) for a point picked on the map,
 * useRig(rig) to put fitted numbers on the sheet, restoreRig() to take them back,
 * editSpreads(spreads or null) to put the plan's spreads in the rig (an undo step).
 */
export function mountPanels($, { engine, getRig, onPick, useRig, restoreRig, editSpreads }) {
  // What the panels write into, as the HTML gives it (for `forget`, the tests' reset). The map
  // (stability-chart and its table) is the chart's own: a first visit's check redraws it.
  const restoreOutputs = keepPristine(["plan-spreads-msgs", "plan-status", "plan-progress", "plan-result",
    "plan-use", "runup-messages", "runup-result", "lean-cancel", "lean-status", "lean-progress", "lean-chart",
    "motion-angle-msg", "motion-duration-msg", "motion-knock-msg", "motion-ramp-from-msg", "motion-ramp-time-msg",
    "motion-ramp-rate-msg", "motion-ramp-delay-msg", "motion-status", "motion-progress", "motion-cancel",
    "motion-anim", "motion-play", "motion-time", "motion-clock", "motion-drive-speed", "motion-events",
    "motion-plot", "motion-knock-go", "motion-save-csv", "tolerance-cancel", "tolerance-status", "tolerance-progress", "tolerance-result", "basin-map",
    "loads-result", "fit-log-source", "fit-log-msgs", "fit-status", "fit-progress", "fit-cancel", "fit-result",
    "fit-apply", "fit-undo", "fit-apply-note", "fit-plot", "fit-go", "plan-go", "plan-cancel"].map($));
  const chart = createChartView({
    holder: $("stability-chart"),
    progress: $("chart-progress"),
    status: $("chart-status"),
    cancel: $("chart-cancel"),
    redraw: $("chart-redraw"),
    axisInputs: document.querySelectorAll('input[name="chart-axis"]'),
    readout: $("chart-readout"),
    note: $("chart-note"),
    table: (data) => showMapTable($("map-table"), data),
    save: [$("chart-save-svg"), $("chart-save-png"), $("chart-save-csv")],
  }, { engine, onPick });

  const plan = createPlanView({
    form: $("plan-form"),
    spreads: $("plan-spreads"),
    msgs: $("plan-spreads-msgs"),
    forInputs: document.querySelectorAll('input[name="plan-for"]'),
    go: $("plan-go"),
    cancel: $("plan-cancel"),
    status: $("plan-status"),
    progress: $("plan-progress"),
    out: $("plan-result"),
    use: $("plan-use"),
  }, { engine, getRig, editSpreads, onPick, chart });

  const runup = createRunupView({
    form: $("runup-form"),
    rate: $("runup-rate"),
    start: $("runup-start"),
    factor: $("runup-factor"),
    messages: $("runup-messages"),
    out: $("runup-result"),
  }, { engine, getRig });

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
  }, { engine, getRig });

  const tolerance = createToleranceView({
    go: $("tolerance-go"),
    basinGo: $("basin-go"),
    size: $("basin-size"),
    cancel: $("tolerance-cancel"),
    progress: $("tolerance-progress"),
    status: $("tolerance-status"),
    out: $("tolerance-result"),
    basin: $("basin-map"),
  }, { engine, getRig });

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
  }, { engine, getRig, useRig, restoreRig });

  const lean = createLeanView({
    go: $("lean-go"),
    cancel: $("lean-cancel"),
    progress: $("lean-progress"),
    status: $("lean-status"),
    out: $("lean-chart"),
  }, { engine, getRig });

  const loads = createLoadsView({ go: $("loads-go"), out: $("loads-result") },
    { engine, getRig, getEquilibrium: () => motion.reference });

  return {
    chart,
    /** As on a first visit (automated tests only, see app.js): every panel's work stopped and
     * forgotten, its output as the HTML gives it. The map is the caller's (follow.forgetMap). */
    forget() {
      for (const panel of [plan, runup, motion, tolerance, fit, lean, loads]) panel.forget();
      restoreOutputs();
    },
    /** The check's problems: the plan panel shows those of the spreads. */
    problems: (problems) => plan.problems(problems),
    /** Every panel hears of a new rig; the map's own redraw is the caller's to time. */
    rigChanged(rig) {
      plan.rigChanged(rig);
      runup.rigChanged(rig);
      motion.rigChanged(rig);
      tolerance.rigChanged(rig);
      loads.rigChanged(rig);
      lean.rigChanged(rig);
      fit.rigChanged(rig);
      return chart.setRig(rig);
    },
    /** The display units changed: each panel with numbers on show writes them again. */
    unitsChanged() {
      for (const panel of [runup, plan, loads, fit, lean]) panel.unitsChanged?.();
    },
    /** The check's result marks the operating point on the map and in the motion panel. */
    checked(result) {
      chart.setOperatingPoint(result);
      motion.setOperatingPoint(result);
    },
  };
}
