// Choosing the operating point: the rig's spreads (kept in the rig file as `spreads`, edited
// here as text), the core's `plan` job stepped with progress and Cancel, its recommendation,
// worst-case margin, binding rig and edge, run-up advice and sensitivity table, the robust
// region drawn over the stability map (chart-view's overlay) and a button that types the
// recommended point into the sheet (one undo step, as a point picked on the map). No physics
// here: every number shown is the core's.

import { h, replaceChildren } from "../lib/dom.js";
import { Runner, busyMark, num, statusLine } from "../engine/motion-job.js";
import { displayUnits, lengthShown, unitOf } from "../state/units.js";
import { isCurrent, lastSession, markFresh, showAgain } from "./last-session.js";

const SVG_NS = "http://www.w3.org/2000/svg";
const EDGE_WORDS = {
  speed_low_rpm: "lower speed edge", speed_high_rpm: "upper speed edge",
  stroke_low_m: "lower stroke edge", stroke_high_m: "upper stroke edge",
};
const EQ_WORDS = { inverted: "upright", hanging: "hanging" };

/** The spreads object as text: one "path spread" a line. */
export function spreadsText(spreads) {
  if (!spreads || typeof spreads !== "object" || Array.isArray(spreads)) return "";
  return Object.entries(spreads).map(([path, text]) => `${path} ${typeof text === "string" ? text : JSON.stringify(text)}`).join("\n");
}

/** Text back to the spreads object (null when empty): a line is a path, then its spread after
 * spaces, ":" or "="; the core checks both and names the path of anything wrong. */
export function parseSpreads(text) {
  const out = {};
  for (const line of String(text).split("\n")) {
    const t = line.trim();
    if (!t) continue;
    const m = t.match(/^(\S+?)\s*(?:[:=]\s*|\s+)(.*)$/);
    if (m) out[m[1]] = m[2].trim();
    else out[t] = "";
  }
  return Object.keys(out).length ? out : null;
}

/** The rig the plan depends on: without the operating point when the limits are given
 * (moving the point to the recommendation keeps the plan), whole otherwise (default limits
 * follow the operating point). */
function planKey(rig) {
  const limits = rig.limits || {};
  if (!limits.speed_rpm || !limits.stroke_m) return JSON.stringify(rig);
  const drive = { ...(rig.drive || {}) };
  delete drive.speed_rpm;
  delete drive.stroke_m;
  return JSON.stringify({ ...rig, drive });
}

/** What the binding rig stands for, in words: one link's equivalent pendulum, or the values
 * of the spread numbers of a sampled rig of several links. */
function rigWords(values) {
  if (values.values && typeof values.values === "object") {
    return Object.entries(values.values).map(([k, v]) => `${k} ${num(v, 4)}`).join(", ");
  }
  const named = { equivalent_length_m: "equivalent length", damping_rate_1_s: "damping rate" };
  return Object.entries(values).filter(([, v]) => typeof v === "number")
    .map(([k, v]) => (k === "equivalent_length_m" ? `${named[k]} ${mm(v)}`
      : k === "damping_rate_1_s" ? `${named[k]} ${num(v, 4)} 1/s` : `${k} ${num(v, 4)}`)).join(", ");
}

/** A stroke in the display units: mm or in (state/units.js). */
const mm = (m) => {
  const [value, unit] = lengthShown(m);
  return `${num(value, 5)} ${unit}`;
};
const rpm = (v) => `${num(v, 5)} rpm`;

/**
 * @param {object} els  {form, spreads, msgs, forInputs, go, cancel, status, progress, out, use}
 * @param {object} deps {engine, getRig(), editSpreads(obj|null), onPick({speed_rpm, stroke_m}), chart}
 */
export function createPlanView(els, { engine, getRig, editSpreads, onPick, chart }) {
  const runner = new Runner(engine);
  const status = statusLine(els.status, els.progress);
  const busy = busyMark(els.cancel, els.out);
  let result = null; // the last plan's result
  let shownReply = null; // its reply, written again when the display units change
  let key = ""; // the rig it was for (planKey)

  const target = () => [...els.forInputs].find((i) => i.checked)?.value || "inverted";

  function showProblems(problems) {
    const mine = (problems || []).filter((p) => p.path.startsWith("spreads"));
    replaceChildren(els.msgs, ...mine.map((p) => h("li", { "data-path": p.path }, `${p.path}: ${p.message}`)));
    els.spreads.setAttribute("aria-invalid", mine.length ? "true" : "false");
    return mine.length;
  }

  function setOverlay() {
    chart.setOverlay(result && isCurrent(els.out) ? (svg, axes) => drawRegion(svg, axes, result) : null);
  }

  async function run() {
    const rig = getRig();
    if (!rig) return;
    const planned = planKey(rig);
    busy(true);
    els.use.disabled = true;
    els.out.dataset.state = "running";
    setOverlay();
    status("Planning: charting every rig that bounds the spreads…", 0);
    const asked = displayUnits(); // the units of the words the core writes
    const reply = await runner.start("plan", { rig, for: target(), units: asked },
      (step) => status(`Planning: ${step.stage} (${Math.round(step.fraction * 100)}%)`, step.fraction));
    if (reply === null) return; // cancelled or superseded
    reply.units = asked;
    busy(false);
    if (!reply.ok) {
      els.out.dataset.state = "failed";
      const shown = reply.problems ? showProblems(reply.problems) : 0;
      status(reply.problems
        ? (shown ? "The plan waits for spreads without problems (see the messages under the spreads)."
          : `The plan waits for a rig without problems: ${reply.problems.map((p) => `${p.path}: ${p.message}`).join("; ")}`)
        : `The plan could not be worked out: ${reply.error}`);
      return;
    }
    showProblems([]);
    result = reply.result;
    key = planned;
    status(result.speed_rpm === null ? "Planned: no point of the search grid holds for every rig of the set."
      : "Planned: the recommendation is below and marked on the map.", 1);
    show(reply);
    kept.keep(key, reply);
  }

  function show(reply) {
    shownReply = reply;
    const r = reply.result;
    markFresh(els.out);
    els.out.dataset.result = JSON.stringify(r);
    const region = r.robust_region;
    const size = Object.entries(region.area_percent_of_limits)
      .map(([eq, pc]) => `${EQ_WORDS[eq]}: ${num(pc, 3)}% of the limits' box`).join("; ");
    const parts = [];
    if (r.speed_rpm === null) {
      parts.push(h("p", { class: "runup-summary is-not-met", role: "status" },
        "No point of the search grid inside the rig's limits holds for every rig within these spreads. "
        + "Narrow the spreads, or narrow the limits to look closer (see how it was worked out)."));
    } else {
      parts.push(h("p", { class: "plan-summary", "data-key": "recommendation" },
        h("strong", {}, `Run at ${rpm(r.speed_rpm)} with a stroke of ${mm(r.stroke_m)}.`),
        ` The smallest margin over every rig within the spreads is ${num(r.worst_margin_percent, 3)}% `
        + `(speed ${num(r.speed_margin_percent, 3)}%, stroke ${num(r.stroke_margin_percent, 3)}%).`));
      const b = r.binding;
      if (b) {
        const e = b.edge;
        const where = e.edge === null ? "" : ` at ${e.axis === "speed" ? rpm(e.edge) : mm(e.edge)}`;
        const values = rigWords(b.rig_values);
        parts.push(h("p", { "data-key": "binding" },
          `It is set by the ${e.side} ${e.axis} edge of the ${EQ_WORDS[b.equilibrium]} position${where}, `
          + `for the rig with ${values || "the nominal numbers"}.`));
      }
      if (r.runup) {
        parts.push(h("p", { "data-key": "runup" }, r.runup.min_rate_rpm_s > 0
          ? `Run up from rest at ${num(r.runup.min_rate_rpm_s, 3)} rpm/s or faster (a disturbance of the hanging pendulum then grows at most ${num(r.runup.factor, 3)} times through the resonances crossed).`
          : "No resonance of the hanging pendulum is crossed on the way up: any ramp rate will do."));
      }
    }
    parts.push(h("p", { "data-key": "region" },
      `Robust region (hatched on the map in the stroke view: upright / , hanging \\ ; the yellow diamond marks the recommended point): ${size}; ${region.rigs} rig${region.rigs === 1 ? " bounds" : "s bound"} it.`));
    if (r.sensitivity.length) parts.push(sensitivityTable(r));
    parts.push(h("details", { class: "how" }, h("summary", {}, "How this was computed"),
      h("ul", { class: "eq-notes" }, h("li", {}, `Metric: ${r.metric}.`),
        ...r.notes.map((n) => h("li", {}, `${n}.`)))),
    h("details", { class: "report-text" }, h("summary", {}, `The same in the command line's words (${reply.units || "metric"} units)`),
      h("pre", {}, reply.report_text)));
    replaceChildren(els.out, ...parts);
    els.use.disabled = r.speed_rpm === null;
    setOverlay();
  }

  function sensitivityTable(r) {
    const names = Object.keys(EDGE_WORDS);
    const rows = [];
    for (const row of r.sensitivity) {
      for (const eq of r.for) {
        const per = row[eq] || {};
        const cells = "note" in per
          ? [h("td", { colspan: String(names.length) }, per.note)]
          : names.map((name) => {
            const v = per[name];
            if (!v) return h("td", { "data-edge": name }, "no edge near");
            // below the edges' own precision (1e-10 relative, over a 1e-4 step) a move reads as none
            const speedEdge = name.startsWith("speed");
            const tiny = Math.abs(v.over_half_spread) < (speedEdge ? 0.01 : 1e-7);
            const moved = tiny ? (speedEdge ? "≈ 0 rpm" : `≈ 0 ${unitOf("length")}`)
              : speedEdge ? rpm(v.over_half_spread) : mm(v.over_half_spread);
            return h("td", { "data-edge": name, "data-value": v.per_unit }, moved);
          });
        rows.push(h("tr", { "data-path": row.path, "data-eq": eq },
          h("th", { scope: "row" }, h("code", {}, row.path), ` ${row.spread}`, r.for.length > 1 ? ` (${EQ_WORDS[eq]})` : ""),
          ...cells));
      }
    }
    return h("table", { class: "est-table plan-sensitivity" },
      h("caption", {}, "How far each edge near the recommended point moves across half of each spread (what measuring that number better is worth)"),
      h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Number and spread"),
        ...names.map((n) => h("th", { scope: "col" }, EDGE_WORDS[n])))),
      h("tbody", {}, ...rows));
  }

  // ------------------------------------------------------------ controls

  els.form.addEventListener("submit", (event) => {
    event.preventDefault();
    run();
  });
  els.cancel.addEventListener("click", async () => {
    await runner.stop();
    busy(false);
    result = null;
    els.out.dataset.state = "cancelled";
    delete els.out.dataset.result;
    replaceChildren(els.out, h("p", { class: "empty" }, "Cancelled: nothing was recommended."));
    els.use.disabled = true;
    status("Plan cancelled. Find the operating point to start again.");
    setOverlay();
  });
  els.spreads.addEventListener("input", () => editSpreads(parseSpreads(els.spreads.value)));
  els.use.addEventListener("click", () => {
    if (!result || result.speed_rpm === null) return;
    onPick({ speed_rpm: Number(result.speed_rpm.toPrecision(7)), stroke_m: Number(result.stroke_m.toPrecision(7)) });
  });

  const kept = lastSession("plan", els.out);
  key = kept.restore((reply) => {
    result = reply.result;
    show(reply);
  });
  setOverlay();
  if (key) status("Plan kept from your last session, below: find the operating point again to refresh it.", 1);

  return {
    /** As on a first visit (the tests' reset): a plan under way stopped, none kept. */
    forget() {
      runner.stop();
      result = null;
      shownReply = null;
      key = "";
    },
    /** A new rig on the sheet: its spreads into the box (unless being typed), the plan kept
     * only while it is for this rig. */
    rigChanged(rig) {
      if (document.activeElement !== els.spreads) els.spreads.value = spreadsText(rig.spreads);
      if (!result || planKey(rig) === key) return;
      runner.stop();
      busy(false);
      els.out.dataset.state = "stale";
      els.use.disabled = true;
      status("The rig or its spreads changed: find the operating point again.");
      setOverlay();
    },
    /** The check's problems: those of the spreads are shown under the box. */
    problems: showProblems,
    /** The display units changed: the plan on show is written again in them (the command
     * line's words below stay in the units it was worked out in, as their summary says). */
    unitsChanged() {
      if (!shownReply || !["fresh", "cached", "stale"].includes(els.out.dataset.state)) return;
      showAgain(els.out, () => show(shownReply));
      kept.sayAgain();
      setOverlay();
    },
  };
}

/** The robust region (hatched, one path per position) and the recommended point over the map's
 * SVG, through the axis mapping the core returned with the picture (stroke view only). */
function drawRegion(svg, axes, r) {
  if (axes.y.quantity !== "stroke_m") return null;
  const px = (a, v) => a.px_min + ((v - a.min) / (a.max - a.min)) * (a.px_max - a.px_min);
  const g = document.createElementNS(SVG_NS, "g");
  g.setAttribute("class", "robust-overlay");
  g.setAttribute("pointer-events", "none");
  // one hatch per position: upright leans one way, hanging the other (both: a cross-hatch
  // where both hold)
  const defs = document.createElementNS(SVG_NS, "defs");
  for (const [eq, angle] of [["inverted", 45], ["hanging", -45]]) {
    const hatch = document.createElementNS(SVG_NS, "pattern");
    Object.entries({ id: `robust-hatch-${eq}`, width: "6", height: "6", patternUnits: "userSpaceOnUse",
      patternTransform: `rotate(${angle})` }).forEach(([k, v]) => hatch.setAttribute(k, v));
    const bar = document.createElementNS(SVG_NS, "line");
    Object.entries({ x1: "0", y1: "0", x2: "0", y2: "6", stroke: "#123a75", "stroke-width": "1.6" })
      .forEach(([k, v]) => bar.setAttribute(k, v));
    hatch.append(bar);
    defs.append(hatch);
  }
  g.append(defs);
  const rows = r.robust_region.rows;
  const clampX = (v) => Math.min(axes.x.max, Math.max(axes.x.min, v));
  for (const eq of r.for) {
    let d = "";
    rows.forEach((row, j) => {
      const lo = j > 0 ? (rows[j - 1].y + row.y) / 2 : row.y;
      const hi = j < rows.length - 1 ? (rows[j + 1].y + row.y) / 2 : row.y;
      const y0 = px(axes.y, Math.max(axes.y.min, lo));
      const y1 = px(axes.y, Math.min(axes.y.max, hi));
      for (const [a, b] of row[eq].stable_intervals_rpm) {
        const x0 = px(axes.x, clampX(a));
        const x1 = px(axes.x, clampX(b));
        if (x1 - x0 <= 0 || y0 === y1) continue;
        d += `M${x0.toFixed(2)} ${y0.toFixed(2)}H${x1.toFixed(2)}V${y1.toFixed(2)}H${x0.toFixed(2)}Z`;
      }
    });
    const path = document.createElementNS(SVG_NS, "path");
    path.setAttribute("class", "robust-region");
    path.setAttribute("data-eq", eq);
    path.setAttribute("d", d);
    path.setAttribute("fill", `url(#robust-hatch-${eq})`);
    path.setAttribute("fill-opacity", "0.55");
    path.setAttribute("stroke", "none");
    g.append(path);
  }
  if (r.speed_rpm !== null) {
    const mark = document.createElementNS(SVG_NS, "g");
    mark.setAttribute("class", "recommended-point");
    const cx = px(axes.x, r.speed_rpm);
    const cy = px(axes.y, r.stroke_m);
    mark.setAttribute("transform", `translate(${cx} ${cy})`);
    mark.dataset.speedRpm = String(r.speed_rpm);
    mark.dataset.strokeM = String(r.stroke_m);
    const diamond = document.createElementNS(SVG_NS, "path");
    diamond.setAttribute("d", "M0 -9L9 0L0 9L-9 0Z");
    Object.entries({ fill: "#ffd23f", stroke: "#111", "stroke-width": "2" }).forEach(([k, v]) => diamond.setAttribute(k, v));
    const title = document.createElementNS(SVG_NS, "title");
    title.textContent = `Recommended: ${num(r.speed_rpm, 5)} rpm, ${mm(r.stroke_m)}`;
    mark.append(title, diamond);
    g.append(mark);
  }
  return g;
}
