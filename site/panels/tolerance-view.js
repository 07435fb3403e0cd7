// Knock tolerance and the recovery map: the core's `tolerance` and `basin`
// motion jobs, stepped with progress and Cancel. The simulated tolerance is
// shown beside Kapitza's closed-form estimate, labelled as an estimate; the
// map is the core's SVG, redrawn after every step as it fills in.

import { h, replaceChildren } from "../lib/dom.js";
import {
  Runner, busyMark, cancelWith, failedWords, num, statusLine, stopForEdit,
} from "../engine/motion-job.js";
import { svgNode } from "./schematic-view.js";
import { registerCsv } from "./export.js";
import { isCurrent, lastSession, markFresh } from "./last-session.js";

const DEG = 180 / Math.PI; // display only: the core gives radians and degrees alike

/**
 * @param {object} els {go, basinGo, size, cancel, progress, status, out, basin}
 * @param {object} deps {engine, getRig()}
 */
export function createToleranceView(els, { engine, getRig }) {
  const runner = new Runner(engine);
  let result = null; // the last tolerance result, whose edges the map marks
  let rigKey = ""; // the rig of the tolerance on show (or being found)
  let mapKey = ""; // the rig of the recovery map on show (or being mapped)
  let runKey = ""; // the rig of the work under way
  let basin = null; // the recovery map on show (so far, while it fills in)
  // its cells as CSV: one row per start (SI, as the core gives them); blank: not yet mapped
  registerCsv(els.basin.id, () => basin && {
    header: ["release_angle_rad", "rate_rad_s", "recovered"],
    rows: basin.recovered.flatMap((cells, j) => cells.map((ok, i) => [basin.angles_rad[i],
      basin.rates_rad_s[j], ok === null ? "" : ok ? 1 : 0])),
  });

  const status = statusLine(els.status, els.progress);
  const busy = busyMark(els.cancel, els.out);

  const failed = (reply, what) => status(failedWords(reply, what));

  async function findTolerance() {
    const rig = getRig();
    if (!rig) return;
    rigKey = runKey = JSON.stringify(rig);
    busy(true);
    status("Finding the knock tolerance: knocks and releases, larger each time, then halving the gap…", 0);
    const reply = await runner.start("tolerance", { rig },
      (step) => status(`Finding the knock tolerance: ${Math.round(step.fraction * 100)}%`, step.fraction));
    if (reply === null) return;
    busy(false);
    if (!reply.ok) {
      failed(reply, "knock tolerance");
      return;
    }
    status("Knock tolerance found.", 1);
    showTolerance(reply);
    keptTolerance.keep(rigKey, { result: reply.result, report_text: reply.report_text });
  }

  function showTolerance(reply) {
    result = reply.result;
    markFresh(els.out);
    els.out.dataset.result = JSON.stringify(result);
    const est = result.estimates || {};
    const edgeNote = (name, part) => {
      if (!part) return null;
      const notes = [`found to within ${num(part.precision * 100, 2)}% by halving`];
      if (part.fragmented) notes.push("the edge is fragmented (recoveries and falls interleave near it)");
      if (part.message) notes.push(part.message);
      return h("li", {}, `${name}: ${notes.join("; ")}.`);
    };
    replaceChildren(els.out,
      result.stable ? null : h("p", { class: "runup-summary is-not-met", role: "status" },
        `No knock is tolerated: ${result.message || "the upright position is unstable here"}.`),
      h("table", { class: "est-table tolerance-table" },
        h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Upright pendulum recovers from"),
          h("th", { scope: "col" }, "Simulated"),
          h("th", { scope: "col" }, "Estimate (Kapitza's averaged potential)"))),
        h("tbody", {},
          h("tr", { "data-key": "knock" }, h("th", { scope: "row" }, "a knock up to"),
            h("td", { "data-value": result.max_knock_rad_s }, `${num(result.max_knock_rad_s)} rad/s`),
            h("td", { "data-value": est.knock_rad_s }, `${num(est.knock_rad_s)} rad/s (estimate)`)),
          h("tr", { "data-key": "release" }, h("th", { scope: "row" }, "a release from rest at an angle up to"),
            h("td", { "data-value": result.max_release_angle_rad },
              `${num(result.max_release_angle_rad * DEG)}° (${num(result.max_release_angle_rad)} rad)`),
            h("td", { "data-value": est.release_angle_rad },
              `${num(est.release_angle_rad * DEG)}° (${num(est.release_angle_rad)} rad) (estimate)`)))),
      h("p", { class: "hint" }, "A knock is a sudden turning rate given to the first link at drive phase 0; "
        + "recovered means no link passes the horizontal in a run of at least 10 s."),
      h("details", { class: "how" }, h("summary", {}, "How this was computed"),
        h("ul", { class: "eq-notes" }, edgeNote("Knock", result.knock), edgeNote("Release", result.release),
          est.note ? h("li", {}, `Estimate: ${est.note}.`) : null)),
      h("details", { class: "report-text" }, h("summary", {}, "The same in the command line's words"),
        h("pre", {}, reply.report_text)));
  }

  async function mapRecovery() {
    const rig = getRig();
    if (!rig) return;
    mapKey = runKey = JSON.stringify(rig);
    const size = Number(els.size.value);
    const marks = result && result.stable
      ? { knock_rad_s: result.max_knock_rad_s, release_rad: result.max_release_angle_rad } : {};
    busy(true);
    els.basin.hidden = false;
    els.basin.dataset.state = "running";
    status(`Mapping recovery over ${size} × ${size} starts: the first picture comes in a moment…`, 0);
    const reply = await runner.start("basin", { rig, size, ...marks }, (step) => {
      if (step.svg) showMap(step, "running");
      status(`Mapping recovery: ${Math.round(step.fraction * 100)}% (the picture so far is shown)`, step.fraction);
    });
    if (reply === null) return;
    busy(false);
    if (!reply.ok) {
      els.basin.dataset.state = "stale";
      failed(reply, "recovery map");
      return;
    }
    showMap(reply, "done");
    keptMap.keep(mapKey, { svg: reply.svg, axes: reply.axes, basin: reply.basin });
    status(`Recovery map complete: ${reply.basin.message || "done"}.`, 1);
  }

  function showMap(step, mapState) {
    basin = step.basin || null;
    els.basin.replaceChildren(svgNode(step.svg, "Recovery map over start angle and rate"));
    els.basin.dataset.state = mapState;
    delete els.basin.dataset.kept;
    els.basin.dataset.axes = JSON.stringify(step.axes);
    if (mapState === "done") {
      els.basin.dataset.recovered = JSON.stringify(step.basin.recovered);
      els.basin.append(h("details", { class: "how" }, h("summary", {}, "How this was computed"),
        h("p", { class: "hint" }, `${step.basin.method}; ${step.basin.message}.`)));
    }
  }

  els.go.addEventListener("click", findTolerance);
  els.basinGo.addEventListener("click", mapRecovery);
  cancelWith(els.cancel, runner, busy, els.basin, status, "Cancelled: what is shown is what was finished.");
  const keptTolerance = lastSession("tolerance", els.out);
  const keptMap = lastSession("basin", els.basin);
  rigKey = keptTolerance.restore(showTolerance);
  mapKey = keptMap.restore((step) => {
    els.basin.hidden = false;
    showMap(step, "done");
  });
  if (rigKey || mapKey) status("Kept from your last session, below: work it out again to refresh it.", 1);

  return {
    /** As on a first visit (the tests' reset): work under way stopped, no result or map kept. */
    forget() {
      runner.stop();
      result = null;
      rigKey = "";
      mapKey = "";
      runKey = "";
      basin = null;
    },
    /** The rig changed: running work stops; shown numbers are of the old rig. */
    rigChanged(rig) {
      const key = JSON.stringify(rig);
      const tolerance = key !== rigKey && isCurrent(els.out);
      const map = key !== mapKey && ["done", "cached"].includes(els.basin.dataset.state);
      const stopped = key !== runKey && stopForEdit(runner, busy, status,
        "The rig changed: the work in progress was stopped. Start it again for the new rig.");
      if (!stopped && (tolerance || map)) {
        status("These numbers are of the rig before your last edit: work them out again.");
      }
      if (tolerance) els.out.dataset.state = "stale";
      if (map) els.basin.dataset.state = "stale";
    },
  };
}
