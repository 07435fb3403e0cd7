// Run-up: the resonances the drive passes on its way to the operating speed
// at a given ramp rate (the core's `runup` op), told as what a technician
// does about each one. Numbers come from the core; this file only words them.

import { h, replaceChildren } from "../lib/dom.js";
import { Cancelled } from "../engine/worker-client.js";
import { lengthShown } from "../state/units.js";
import { isCurrent, lastSession, markFresh, showAgain } from "./last-session.js";

const GROWTH_CAP = Math.exp(700) * (1 - 1e-12);
const NAMES = { inverted: "Inverted (upright)", hanging: "Hanging" };

function n(x, digits = 4) {
  if (!Number.isFinite(x)) return "—";
  if (Math.abs(x) >= 1e6 || (Math.abs(x) < 1e-3 && x !== 0)) return x.toExponential(2).replace("e+", "e");
  return String(Number(x.toPrecision(digits)));
}

/** A number typed in a field: blank gives the default, anything else must be a plain number. */
function readNumber(input, fallback) {
  const text = input.value.trim().replace(/\s*(rpm\/s|rpm)$/i, "");
  if (text === "") return { value: fallback };
  const value = Number(text);
  return Number.isFinite(value) ? { value }
    : { problem: `"${input.value}" is not a number; type digits such as 20` };
}

function crossingItem(c, result) {
  const growth = c.simulated_amplification ?? c.amplification;
  const how = c.simulated_amplification !== null ? "simulated ramp" : "frozen-speed estimate";
  const met = Number.isFinite(growth) && growth <= result.factor;
  // the frozen estimate stops at e^700 (runup.LOG_GROWTH_CAP): past it, no number is shown
  const grows = growth >= GROWTH_CAP ? "past ×1e304" : `about ×${n(growth, 3)}`;
  const minRate = c.min_rate_rpm_s;
  const advice = met
    ? `Within your limit of ×${n(result.factor)}.`
    : `NOT MET: more than your limit of ×${n(result.factor)}. `
      + (Number.isFinite(minRate)
        ? `Ramp through ${n(c.speed_from_rpm)}–${n(c.speed_to_rpm)} rpm at ${n(minRate)} rpm/s or faster, `
        : "No ramp rate is fast enough here: ")
      + "or keep the pendulum restrained (a stop or catch, never a hand) until the drive is past "
      + `${n(c.speed_to_rpm)} rpm.`;
  return h("li", { class: `crossing ${met ? "is-met" : "is-not-met"}`, "data-eq": c.equilibrium },
    h("p", { class: "crossing-head" },
      h("strong", {}, `${NAMES[c.equilibrium]}: unstable from ${n(c.speed_from_rpm)} to ${n(c.speed_to_rpm)} rpm`)),
    h("p", {}, `At ${n(result.rate_rpm_s)} rpm/s the drive spends ${n(c.seconds, 3)} s there `
      + `(${n(c.cycles, 3)} drive cycles); a small disturbance grows ${grows} (${how}; `
      + `largest multiplier ${n(c.peak_multiplier)}).`),
    h("p", {}, `Slowest ramp that keeps this under ×${n(result.factor)}: `
      + (Number.isFinite(minRate) ? `${n(minRate)} rpm/s.` : "none (no rate is fast enough).")),
    h("p", { class: met ? "crossing-ok" : "crossing-warn" }, advice));
}

/**
 * @param {object} els {form, rate, start, factor, messages, out}
 * @param {object} deps {engine, getRig()}
 */
export function createRunupView(els, { engine, getRig }) {
  let seq = 0;
  let shown = null; // the run-up on show, written again when the display units change
  let rigKey = ""; // the rig it is for

  async function run() {
    const rig = getRig();
    if (!rig) return;
    const rate = readNumber(els.rate, null); // blank: the engine recommends the rate
    const start = readNumber(els.start, 0);
    const factor = readNumber(els.factor, 10);
    const problems = [];
    if (rate.problem || (rate.value !== null && !(rate.value > 0))) problems.push(`Ramp rate: ${rate.problem || "type a rate above 0 rpm/s, such as 20, or leave it blank for the slowest safe rate"}.`);
    if (start.problem || start.value < 0) problems.push(`Start speed: ${start.problem || "the speed must be 0 rpm or more"}.`);
    if (factor.problem || !(factor.value > 1)) problems.push(`Acceptable growth: ${factor.problem || "it must be above 1 (10 is usual)"}.`);
    replaceChildren(els.messages, problems.map((p) => h("p", { class: "msg is-problem" }, p)));
    if (problems.length) return;
    const mine = ++seq;
    rigKey = JSON.stringify(rig);
    els.out.dataset.state = "running";
    replaceChildren(els.out, h("p", { class: "empty" }, "Working out the run-up…"));
    let reply;
    try {
      reply = await engine.request("runup", { rig, rate_rpm_s: rate.value, start_rpm: start.value,
                                              factor: factor.value }, { channel: "runup" });
    } catch (err) {
      if (err instanceof Cancelled) return;
      reply = { ok: false, error: err.message };
    }
    if (mine !== seq) return;
    if (!reply.ok) {
      els.out.dataset.state = "failed";
      const ofRate = (reply.problems || []).filter((p) => p.path === "rate_rpm_s");
      replaceChildren(els.out, h("p", { class: "msg is-problem" }, ofRate.length
        ? `Ramp rate: ${ofRate.map((p) => p.message).join("; ")}.`
        : reply.problems
          ? `The run-up needs a rig without problems: ${reply.problems.map((p) => p.message).join("; ")}.`
          : `The run-up could not be worked out: ${reply.error}`));
      return;
    }
    show(reply.result);
    kept.keep(rigKey, reply.result);
  }

  function show(result) {
    shown = result;
    const [stroke, unit] = lengthShown(result.stroke_m);
    markFresh(els.out);
    els.out.dataset.result = JSON.stringify(result);
    const all = ["inverted", "hanging"].flatMap((eq) => result[eq].crossings);
    const bad = ["inverted", "hanging"].filter((eq) => !result[eq].ok);
    // an end speed the method cannot resolve: the crossings are fine, the end is not known
    const unknown = ["inverted", "hanging"].filter((eq) => result[eq].held_at_end === null);
    const within = `Every crossing stays within ×${n(result.factor)} at ${n(result.rate_rpm_s)} rpm/s`;
    const summaryClass = bad.length ? "is-not-met" : unknown.length ? "is-unknown" : "is-met";
    replaceChildren(els.out,
      h("p", { class: `runup-summary ${summaryClass}`, role: "status" },
        bad.length
          ? `Not met for ${bad.map((eq) => NAMES[eq].toLowerCase()).join(" and ")}: see below before you start the drive.`
          : unknown.length
            ? `${within}, but whether ${n(result.end_rpm)} rpm holds the ${unknown.map((eq) => NAMES[eq].toLowerCase()).join(" and ")} pendulum is not known: see below.`
            : `${within}.`),
      result.rate_recommended
        ? h("p", { "data-key": "recommended" }, `${n(result.rate_rpm_s)} rpm/s is the slowest ramp that keeps a disturbance of the hanging pendulum within ×${n(result.factor)} through every resonance on the way (the pendulum rests hanging while the drive runs up); ramp at least this fast.`)
        : null,
      h("p", {}, `Run-up from ${n(result.start_rpm)} to ${n(result.end_rpm)} rpm at the stroke of `
        + `${n(stroke)} ${unit}; the run-down passes the same intervals in reverse, with the same growth at the same rate.`),
      all.length ? h("ol", { class: "crossings" }, all.map((c) => crossingItem(c, result)))
        : h("p", {}, "No unstable interval is crossed on the way."),
      // held at the end speed? Said where no crossing runs to it (below the low-speed
      // floor nothing counts as crossed, yet an upright pendulum falls there)
      ...["inverted", "hanging"].filter((eq) => "end_max_multiplier" in result[eq]).map((eq) => {
        const m = result[eq].end_max_multiplier; // null: past what a double holds
        return h("p", { class: "crossing-warn", "data-key": `not-held-${eq}` },
          `${NAMES[eq]}: not held at ${n(result.end_rpm)} rpm: a small disturbance grows `
          + `${Number.isFinite(m) ? `×${n(m, 3)}` : "beyond ×1e308"} every drive cycle there.`);
      }),
      ...["inverted", "hanging"].filter((eq) => result[eq].held_at_end === null).map((eq) =>
        h("p", { class: "hint", "data-key": `end-unknown-${eq}` },
          `${NAMES[eq]}: whether ${n(result.end_rpm)} rpm holds it is not known: that speed is `
          + "outside what the method can resolve.")),
      h("details", { class: "how" }, h("summary", {}, "How this was computed"),
        h("p", { class: "hint" }, `${result.note}.`)));
  }

  els.form.addEventListener("submit", (event) => {
    event.preventDefault();
    run();
  });
  const kept = lastSession("runup", els.out, els.messages); // the words stay when the units change
  rigKey = kept.restore(show);

  return {
    /** As on a first visit (the tests' reset): no run-up on show, a reply under way dropped. */
    forget() {
      seq += 1;
      shown = null;
      rigKey = "";
    },
    /** The display units changed: the run-up on show is written again in them. */
    unitsChanged() {
      if (!shown) return;
      showAgain(els.out, () => show(shown));
    },
    /** The rig changed: a shown result is of the old rig (the same rig checked again is not). */
    rigChanged(rig) {
      if (JSON.stringify(rig) !== rigKey && isCurrent(els.out)) {
        els.out.dataset.state = "stale";
        els.messages.replaceChildren(h("p", { class: "msg" }, "The rig has changed since this run-up: check it again."));
      }
    },
  };
}
