// Loads: the core's `loads` op (drive force, power, link axial loads over a
// cycle, flags against the rig's limits) as a small table, the core's plot
// and its words. Exceeded limits lead, in the page's warning style.

import { h, replaceChildren } from "../lib/dom.js";
import { num } from "../engine/motion-job.js";
import { svgNode } from "./schematic-view.js";
import { Cancelled } from "../engine/worker-client.js";
import { STANDARD_GRAVITY, displayUnits, quantityText, unitOf } from "../state/units.js";
import { registerCsv } from "./export.js";
import { isCurrent, lastSession, markFresh } from "./last-session.js";

const say = (si, kind, digits = 4) => quantityText(si, kind, (v) => num(v, digits));

/** A mean that is rounding noise beside the peak reads as 0. */
const small = (v, peak, kind) => (Math.abs(v) < 1e-9 * Math.abs(peak) ? `0 ${unitOf(kind)}` : say(v, kind, 3));

// Each limit the loads are flagged against: its words and the kind of its numbers (the core's
// render/motion_report.py _FLAGS); the flag's own ``message`` is SI, these follow the units.
const FLAGS = { max_force_N: ["peak drive force", "force"], max_power_W: ["peak drive power", "power"],
  max_accel_m_s2: ["peak pivot acceleration", "accel"] };

/** A flag in words in the display units: "peak drive force 12.5 lbf is within the limit of 20 lbf";
 * in metric the core's own words, as the command line prints them. */
function flagWords(f) {
  const [what, kind] = FLAGS[f.limit] || [];
  if (!kind || displayUnits() === "metric") return f.message;
  return `${what} ${say(f.value, kind)} ${f.exceeded ? "EXCEEDS" : "is within"} the limit of ${say(f.limit_value, kind)}`;
}

/** A row of the table: ``data-value`` keeps the SI number, the cell shows the chosen units. */
function row(key, name, value, kind, note = "") {
  return h("tr", { "data-key": key }, h("th", { scope: "row" }, name),
    h("td", { "data-value": value, "data-unit": unitOf(kind) }, say(value, kind)), h("td", {}, note));
}

/** The samples over the cycle as CSV (SI, as the command line's --json): phase, forces. */
function samplesCsv(result) {
  const s = result && result.samples;
  if (!s || !Array.isArray(s.phase_rad)) return null;
  const guide = Array.isArray(s.guide_force_N);
  const header = ["phase_rad", "drive_force_N", ...(guide ? ["guide_force_N"] : []),
    ...s.axial_N.map((_, i) => `link${i + 1}_axial_N`)];
  const rows = s.phase_rad.map((p, k) => [p, s.drive_force_N[k], ...(guide ? [s.guide_force_N[k]] : []),
    ...s.axial_N.map((a) => a[k])]);
  return { header, rows };
}

/**
 * @param {object} els {go, out}
 * @param {object} deps {engine, getRig(), getEquilibrium()}
 */
export function createLoadsView(els, { engine, getRig, getEquilibrium }) {
  let seq = 0;
  let rigKey = "";
  let shownReply = null; // the loads on show: their samples are the CSV, their numbers follow the units
  registerCsv(els.out.id, () => samplesCsv(shownReply?.result));

  async function run() {
    const rig = getRig();
    if (!rig) return;
    const mine = ++seq;
    rigKey = JSON.stringify(rig);
    const equilibrium = getEquilibrium();
    els.out.dataset.state = "running";
    els.out.setAttribute("aria-busy", "true");
    replaceChildren(els.out, h("p", { class: "empty" }, "Working out the loads over one drive cycle…"));
    let reply;
    try {
      reply = await engine.request("loads", { rig, equilibrium, units: displayUnits() }, { channel: "loads" });
    } catch (err) {
      if (err instanceof Cancelled) return;
      reply = { ok: false, error: err.message };
    }
    if (mine !== seq) return;
    els.out.setAttribute("aria-busy", "false");
    if (!reply.ok) {
      els.out.dataset.state = "failed";
      replaceChildren(els.out, h("p", { class: "msg is-problem" }, reply.problems
        ? "The loads wait for a rig without problems: fix the marked fields in the rig sheet."
        : `The loads could not be worked out: ${reply.error}`));
      return;
    }
    show(reply);
    kept.keep(rigKey, reply);
    // an edit made while the loads were worked out: they are of the rig before it
    if (JSON.stringify(getRig()) !== rigKey) els.out.dataset.state = "stale";
  }

  function show(reply) {
    shownReply = reply;
    const r = reply.result;
    markFresh(els.out);
    els.out.dataset.units = displayUnits();
    els.out.dataset.result = JSON.stringify({ ...r, samples: undefined });
    const exceeded = r.flags.filter((f) => f.exceeded);
    const flags = exceeded.length
      ? h("div", { class: "runup-summary is-not-met load-flags", role: "alert" },
        h("p", {}, `${exceeded.length === 1 ? "A limit" : `${exceeded.length} limits`} of the rig sheet `
          + "exceeded: do not run the rig like this."),
        h("ul", {}, exceeded.map((f) => h("li", { "data-limit": f.limit }, `${flagWords(f)}.`))))
      : h("p", { class: "runup-summary is-met load-flags" }, r.flags.length
        ? "Within every limit given in the rig sheet." : "No limits are given in the rig sheet, so nothing is flagged.");
    const within = r.flags.filter((f) => !f.exceeded)
      .map((f) => h("li", { "data-limit": f.limit }, `${flagWords(f)} (margin ${num(f.margin_percent, 3)}%).`));
    const rot = r.rotation;
    replaceChildren(els.out,
      flags,
      within.length ? h("ul", { class: "eq-notes" }, within) : null,
      h("p", {}, `At ${num(r.speed_rpm)} rpm and ${say(r.stroke_m, "length")} stroke, pendulum ${r.state} `
        + `(${r.equilibrium}); total moving mass ${say(r.total_mass_kg, "mass")}, carriage `
        + `${say(r.carriage_mass_kg, "mass")}.`),
      h("table", { class: "est-table loads-table" },
        h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Over one cycle"), h("th", { scope: "col" }, "Value"),
          h("th", { scope: "col" }, "Note"))),
        h("tbody", {},
          row("drive_force_peak", "Drive force, peak", r.drive_force_N.peak, "force"),
          row("drive_force_rms", "Drive force, RMS", r.drive_force_N.rms, "force",
            `mean ${small(r.drive_force_N.mean, r.drive_force_N.peak, "force")} (the weight is ${say(r.weight_N, "force")})`),
          r.guide_force_N ? row("guide_force_peak", "Sideways force on the guide, peak", r.guide_force_N.peak, "force",
            `across the drive axis (tilted ${num(r.axis_tilt_deg)}°); mean `
            + `${small(r.guide_force_N.mean, r.guide_force_N.peak, "force")}`) : null,
          row("power_peak", "Drive power, peak", r.power_W.peak, "power"),
          row("power_rms", "Drive power, RMS", r.power_W.rms, "power", `mean ${small(r.power_W.mean, r.power_W.peak, "power")}`),
          row("accel_peak", "Pivot acceleration, peak", r.peak_accel_m_s2, "accel",
            `${num(r.peak_accel_m_s2 / STANDARD_GRAVITY, 3)} g`),
          r.links.flatMap((l) => [
            row(`link${l.link}_tension`, `Link ${l.link}, largest pull (tension)`, l.max_tension_N, "force"),
            row(`link${l.link}_compression`, `Link ${l.link}, largest push (compression)`, l.max_compression_N, "force")]),
          rot ? [row("tip_speed", "In rotation: tip speed, largest", rot.tip_speed_m_s, "velocity"),
            row("centripetal", "In rotation: centripetal load, largest", rot.centripetal_load_N, "force")] : [])),
      reply.svg ? h("div", { class: "chart plot" }, svgNode(reply.svg, "Loads over one drive cycle")) : null,
      h("p", { class: "safety-pointer" }, "These loads come from a model. Guard the drive and the swept space, "
        + "and read ", h("a", { href: "#safety-h" }, "Before you run the rig"), " first; local rules come first."),
      h("details", { class: "report-text" }, h("summary", {}, "The same in the command line's words"),
        h("pre", {}, reply.report_text)));
  }

  els.go.addEventListener("click", run);
  const kept = lastSession("loads", els.out);
  rigKey = kept.restore(show);

  return {
    /** As on a first visit (the tests' reset): no loads on show, a reply under way dropped. */
    forget() {
      seq += 1;
      shownReply = null;
      rigKey = "";
    },
    /** The display units changed: loads on show are worked out again in them (the core's
     * plot and words follow the units; a quick op). */
    unitsChanged() {
      if (shownReply && isCurrent(els.out)) run();
    },
    /** The rig changed: shown loads are of the old rig. */
    rigChanged(rig) {
      if (JSON.stringify(rig) !== rigKey && isCurrent(els.out)) els.out.dataset.state = "stale";
    },
  };
}
