// Loads: the core's `loads` op (drive force, power, link axial loads over a
// cycle, flags against the rig's limits) as a small table, the core's plot
// and its words. Exceeded limits lead, in the page's warning style.

import { h, replaceChildren } from "../lib/dom.js";
import { num } from "../engine/motion-job.js";
import { svgNode } from "./schematic-view.js";
import { Cancelled } from "../engine/worker-client.js";

/** A mean that is rounding noise beside the peak reads as 0. */
const small = (v, peak) => (Math.abs(v) < 1e-9 * Math.abs(peak) ? "0" : num(v, 3));

function row(key, name, value, unit, note = "") {
  return h("tr", { "data-key": key }, h("th", { scope: "row" }, name),
    h("td", { "data-value": value }, `${num(value)} ${unit}`), h("td", {}, note));
}

/**
 * @param {object} els {go, out}
 * @param {object} deps {engine, getRig(), getEquilibrium()}
 */
export function createLoadsView(els, { engine, getRig, getEquilibrium }) {
  let seq = 0;
  let rigKey = "";

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
      reply = await engine.request("loads", { rig, equilibrium }, { channel: "loads" });
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
    // an edit made while the loads were worked out: they are of the rig before it
    if (JSON.stringify(getRig()) !== rigKey) els.out.dataset.state = "stale";
  }

  function show(reply) {
    const r = reply.result;
    els.out.dataset.state = "fresh";
    els.out.dataset.result = JSON.stringify({ ...r, samples: undefined });
    const exceeded = r.flags.filter((f) => f.exceeded);
    const flags = exceeded.length
      ? h("div", { class: "runup-summary is-not-met load-flags", role: "alert" },
        h("p", {}, `${exceeded.length === 1 ? "A limit" : `${exceeded.length} limits`} of the rig sheet `
          + "exceeded: do not run the rig like this."),
        h("ul", {}, exceeded.map((f) => h("li", { "data-limit": f.limit }, `${f.message}.`))))
      : h("p", { class: "runup-summary is-met load-flags" }, r.flags.length
        ? "Within every limit given in the rig sheet." : "No limits are given in the rig sheet, so nothing is flagged.");
    const within = r.flags.filter((f) => !f.exceeded)
      .map((f) => h("li", { "data-limit": f.limit }, `${f.message} (margin ${num(f.margin_percent, 3)}%).`));
    const rot = r.rotation;
    replaceChildren(els.out,
      flags,
      within.length ? h("ul", { class: "eq-notes" }, within) : null,
      h("p", {}, `At ${num(r.speed_rpm)} rpm and ${num(r.stroke_m * 1000)} mm stroke, pendulum ${r.state} `
        + `(${r.equilibrium}); total moving mass ${num(r.total_mass_kg)} kg, carriage ${num(r.carriage_mass_kg)} kg.`),
      h("table", { class: "est-table loads-table" },
        h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Over one cycle"), h("th", { scope: "col" }, "Value"),
          h("th", { scope: "col" }, "Note"))),
        h("tbody", {},
          row("drive_force_peak", "Drive force, peak", r.drive_force_N.peak, "N"),
          row("drive_force_rms", "Drive force, RMS", r.drive_force_N.rms, "N",
            `mean ${small(r.drive_force_N.mean, r.drive_force_N.peak)} N (the weight is ${num(r.weight_N)} N)`),
          r.guide_force_N ? row("guide_force_peak", "Sideways force on the guide, peak", r.guide_force_N.peak, "N",
            `across the drive axis (tilted ${num(r.axis_tilt_deg)}°); mean `
            + `${small(r.guide_force_N.mean, r.guide_force_N.peak)} N`) : null,
          row("power_peak", "Drive power, peak", r.power_W.peak, "W"),
          row("power_rms", "Drive power, RMS", r.power_W.rms, "W", `mean ${small(r.power_W.mean, r.power_W.peak)} W`),
          row("accel_peak", "Pivot acceleration, peak", r.peak_accel_m_s2, "m/s²",
            `${num(r.peak_accel_m_s2 / 9.80665, 3)} g`),
          r.links.flatMap((l) => [
            row(`link${l.link}_tension`, `Link ${l.link}, largest pull (tension)`, l.max_tension_N, "N"),
            row(`link${l.link}_compression`, `Link ${l.link}, largest push (compression)`, l.max_compression_N, "N")]),
          rot ? [row("tip_speed", "In rotation: tip speed, largest", rot.tip_speed_m_s, "m/s"),
            row("centripetal", "In rotation: centripetal load, largest", rot.centripetal_load_N, "N")] : [])),
      reply.svg ? h("div", { class: "chart plot" }, svgNode(reply.svg, "Loads over one drive cycle")) : null,
      h("p", { class: "safety-pointer" }, "These loads come from a model. Guard the drive and the swept space, "
        + "and read ", h("a", { href: "#safety-h" }, "Before you run the rig"), " first; local rules come first."),
      h("details", { class: "report-text" }, h("summary", {}, "The same in the command line's words"),
        h("pre", {}, reply.report_text)));
  }

  els.go.addEventListener("click", run);

  return {
    /** The rig changed: shown loads are of the old rig. */
    rigChanged(rig) {
      if (JSON.stringify(rig) !== rigKey && els.out.dataset.state === "fresh") els.out.dataset.state = "stale";
    },
  };
}
