// The lean chart: the core's `lean` motion job (the held orbit's mean lean against the
// drive's tilt, and against speed at the operating stroke), stepped with progress and
// Cancel; the picture and the words are the core's, the cautions stay beside them.

import { h, replaceChildren } from "../lib/dom.js";
import {
  Runner, busyMark, cancelWith, failedWords, num, statusLine, stopForEdit,
} from "../engine/motion-job.js";
import { svgNode } from "./schematic-view.js";
import { registerCsv } from "./export.js";
import { displayUnits } from "../state/units.js";
import { isCurrent, lastSession, markFresh } from "./last-session.js";

/** Where a curve stops, in words (the core says where and why). */
function endWords(name, axis, unit, end) {
  const why = end.why === "unstable" ? "the orbit is unstable there" : "no orbit is found (the lean runs away)";
  return h("li", {}, `${name} against ${axis}: stops at ${num(end.at, 4)} ${unit}: ${why}.`);
}

/** The chart's curves as CSV: one row per point, link and position (the core's numbers). */
function leanCsv(r) {
  const rows = [];
  for (const [by, axis] of [["by_tilt", "tilt"], ["by_speed", "speed"]]) {
    const xs = axis === "tilt" ? r.tilt_deg : r.speed_rpm;
    for (const name of ["inverted", "hanging"]) {
      const curve = r[by][name];
      xs.forEach((x, k) => {
        const lean = curve.lean_deg[k];
        if (!Array.isArray(lean)) return; // no held orbit there
        lean.forEach((v, link) => rows.push([axis, axis === "tilt" ? x : r.speed_tilt_deg,
          axis === "speed" ? x : r.operating_speed_rpm, name, link + 1, v,
          Array.isArray(curve.wobble_deg?.[k]) ? curve.wobble_deg[k][link] : ""]));
      });
    }
  }
  return { header: ["curve", "tilt_deg", "speed_rpm", "equilibrium", "link", "lean_deg", "wobble_deg"], rows };
}

/**
 * @param {object} els {go, cancel, progress, status, out}
 * @param {object} deps {engine, getRig()}
 */
export function createLeanView(els, { engine, getRig }) {
  const runner = new Runner(engine);
  let rigKey = "";
  let shown = null; // the chart's result on show
  registerCsv(els.out.id, () => shown && leanCsv(shown));
  const status = statusLine(els.status, els.progress);
  const busy = busyMark(els.cancel, els.out);

  async function draw() {
    const rig = getRig();
    if (!rig) return;
    rigKey = JSON.stringify(rig);
    busy(true);
    els.out.dataset.state = "running";
    status("Drawing the lean chart: following the held orbit as the tilt and the speed change…", 0);
    const asked = displayUnits(); // the units of the words the core writes
    const reply = await runner.start("lean", { rig, units: asked },
      (step) => status(`Drawing the lean chart: ${Math.round(step.fraction * 100)}%`, step.fraction));
    if (reply === null) return;
    reply.units = asked;
    busy(false);
    if (!reply.ok) {
      els.out.dataset.state = "failed";
      status(failedWords(reply, "lean chart"));
      return;
    }
    show(reply);
    kept.keep(rigKey, reply);
    status("Lean chart drawn.", 1);
    if (JSON.stringify(getRig()) !== rigKey) els.out.dataset.state = "stale";
  }

  function show(reply) {
    const r = reply.result;
    shown = r;
    markFresh(els.out);
    els.out.dataset.result = JSON.stringify(r);
    els.out.dataset.axes = JSON.stringify(reply.axes);
    const ends = [];
    for (const [by, axis, unit] of [["by_tilt", "tilt", "°"], ["by_speed", "speed", "rpm"]]) {
      for (const name of ["inverted", "hanging"]) {
        for (const end of r[by][name].ends) if (end) ends.push(endWords(name, axis, unit, end));
      }
    }
    replaceChildren(els.out,
      svgNode(reply.svg, "Lean chart: mean lean against the drive's tilt and against speed"),
      ends.length ? h("ul", { class: "eq-notes" }, ends) : null,
      h("p", { class: "safety-pointer" }, "A leaning pendulum sweeps further than an upright one: "
        + "guard the whole space it can reach and read ", h("a", { href: "#safety-h" }, "Before you run the rig"),
      " first."),
      h("details", { class: "report-text" }, h("summary", {}, `The same in the command line's words (${reply.units || "metric"} units)`),
        h("pre", {}, reply.report_text)));
  }

  els.go.addEventListener("click", draw);
  cancelWith(els.cancel, runner, busy, els.out, status, "Cancelled: no lean chart was drawn.");
  const kept = lastSession("lean", els.out);
  rigKey = kept.restore(show);
  if (rigKey) status("Lean chart kept from your last session, below: draw it again to refresh it.", 1);

  return {
    /** As on a first visit (the tests' reset): a drawing under way stopped, no chart kept. */
    forget() {
      runner.stop();
      rigKey = "";
      shown = null;
    },
    /** The rig changed: running work stops; a shown chart is of the old rig. */
    rigChanged(rig) {
      if (JSON.stringify(rig) === rigKey) return;
      stopForEdit(runner, busy, status,
        "The rig changed: the lean chart in progress was stopped. Draw it again for the new rig.");
      if (isCurrent(els.out)) els.out.dataset.state = "stale";
    },
  };
}
