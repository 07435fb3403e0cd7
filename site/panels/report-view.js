// The run verdict: shows the core's check result (reply.result of the bridge
// `check` op, the JSON of `shakestill check --json`) in words a technician can
// act on. The element carries that JSON in data-result, replaced with every
// new result; a bad edit keeps the old result on view, marked stale.

import { h, replaceChildren } from "../lib/dom.js";
import { describePath } from "../state/rig-fields.js";
import { accelShown, lengthShown } from "../state/units.js";
import { term } from "./terms.js";

/** A number for reading: 4 significant figures, no trailing zeros. */
export function num(x, digits = 4) {
  if (x === null || x === undefined || Number.isNaN(x)) return "n/a";
  if (!Number.isFinite(x)) return x > 0 ? "infinite" : "-infinite";
  if (x === 0) return "0";
  const text = Math.abs(x) >= 1e6 || Math.abs(x) < 1e-3 ? x.toExponential(digits - 1) : x.toPrecision(digits);
  return text.includes("e") ? text.replace(/\.?0+e/, "e") : text.replace(/(\.\d*?)0+$/, "$1").replace(/\.$/, "");
}

// Strokes and lengths in the units chosen for display: mm, or in (state/units.js).
const mm = (m) => {
  const [value, unit] = lengthShown(m);
  return `${num(value)} ${unit}`;
};
const accel = (a) => {
  const [value, unit] = accelShown(a);
  return `${num(value)} ${unit}`;
};
const rpm = (r) => `${num(r)} rpm`;
const hz = (f) => `${num(f)} Hz`;
const percent = (p) => `${p.toFixed(1)}%`;
const END_WORDS = { edge: "stability edge", limit: "rig limit" };

/** ["1594 rpm to 3600 rpm", "stability edge 41.0% below; rig limit 33.3% above"]. */
function windowText(win, ends, down, up, show) {
  if (!Array.isArray(win)) return ["none (not stable here)", ""];
  const side = (kind, margin, where) => [END_WORDS[kind],
    Number.isFinite(margin) ? `${percent(margin)} ${where}` : null].filter(Boolean).join(" ");
  return [`${show(win[0])} to ${show(win[1])}`,
    [side(ends[0], down, "below"), side(ends[1], up, "above")].filter(Boolean).join("; ")];
}

const EQUILIBRIA = {
  inverted: {
    title: "Inverted (pendulum up)",
    yes: "Stays up",
    no: "Falls over",
    yesText: "The upright position is stable at this speed and stroke: small knocks die away or stay small.",
    noText: "The upright position is not stable here: the pendulum will fall. Change speed or stroke, "
      + "with the drive stopped, and keep the guards in place while trying.",
  },
  hanging: {
    title: "Hanging (pendulum down)",
    yes: "Hangs steady",
    no: "Swings up",
    yesText: "The hanging position is stable: the drive does not pump up a swing.",
    noText: "The hanging position is unstable at this speed and stroke (parametric resonance): "
      + "a swing grows by itself. Expect large motion and loads on the joints.",
  },
};

function row(label, value, note) {
  return h("div", { class: "row" }, h("dt", {}, label),
    h("dd", {}, value, note ? h("span", { class: "note" }, ` ${note}`) : null));
}

/** A window: the range on one line, where each end comes from and its margin below it. */
function windowRow(label, [range, ends]) {
  return h("div", { class: "row" }, h("dt", {}, label),
    h("dd", {}, range, ends ? h("span", { class: "sub" }, ends) : null));
}

const degrees = (list) => list.map((v) => `${num(v, 3)}°`).join(", ");

/** A drive off vertical: the held orbit's mean lean and wobble, per link. */
function leanRows(eq) {
  if (!Array.isArray(eq.lean_deg)) {
    return [row("Held orbit", "none near this position", "the drive's tilt leaves nothing to hold here")];
  }
  return [row("Mean lean", degrees(eq.lean_deg), "of the orbit the pendulum holds, per link"),
    row("Wobble", degrees(eq.wobble_deg), "peak to peak within a drive cycle")];
}

/** The tilt the rig tolerates, when the drive's path off vertical is given. */
function tiltTolerance(result) {
  if (!("tilt_tolerance_deg" in result)) return null;
  const tol = result.tilt_tolerance || {};
  const value = result.tilt_tolerance_deg;
  return h("p", { class: "tilt-tolerance", "data-value": value == null ? "" : value },
    value == null
      ? `Tilt tolerance: none (${tol.message || "no held upright orbit"}).`
      : `Tilt tolerance: ${num(value, 3)}° of drive axis keeps the upright orbit stable with a lean under `
        + `${num(tol.max_lean_deg, 3)}° (${tol.message}). A tilt out of the swing plane is not modelled.`);
}

function equilibriumCard(name, eq) {
  const words = EQUILIBRIA[name];
  const stable = Boolean(eq.stable);
  const m = eq.margins_percent || {};
  const e = eq.window_ends || {};
  const facts = stable
    ? [
      windowRow("Speed window", windowText(eq.speed_window_rpm, [e.speed_low, e.speed_high],
        m.speed_down, m.speed_up, rpm)),
      windowRow("Stroke window", windowText(eq.stroke_window_m, [e.stroke_low, e.stroke_high],
        m.stroke_down, m.stroke_up, mm)),
      row(term("Slow sway", "sway"), eq.slow_frequency_hz == null ? "n/a" : hz(eq.slow_frequency_hz),
        "the slow swing riding on the fast buzz"),
    ]
    : [row([term("Growth factor", "growth"), " per drive cycle"], `× ${num(eq.max_multiplier, 4)}`,
      "a small disturbance grows by this factor every revolution")];
  if ("lean_deg" in eq) facts.push(...leanRows(eq));
  facts.push(row(["Largest ", term("Floquet multiplier", "floquet")], num(eq.max_multiplier, 6), "stable below 1"));
  const notes = Array.isArray(eq.messages) ? eq.messages : [];
  return h("article", { class: `eq-card is-${stable ? "stable" : "unstable"}`, "data-eq": name,
    "aria-labelledby": `eq-${name}` },
  h("h3", { id: `eq-${name}` }, words.title, " ",
    h("span", { class: "verdict-word" }, stable ? words.yes : words.no)),
  h("p", { class: "eq-text" }, stable ? words.yesText : words.noText),
  eq.converged === false
    ? h("p", { class: "eq-warning" }, "Accuracy check not met: treat this verdict with care.")
    : null,
  h("dl", { class: "facts" }, facts),
  notes.length ? h("details", { class: "how" }, h("summary", {}, "How this was computed"),
    h("ul", { class: "eq-notes" }, notes.map((n) => h("li", {}, n)))) : null);
}

/** A line where the joint dampers mix the sway modes too much for the modes' estimates. */
function mixed(modes) {
  if (!modes || !(modes.damper_mixing > modes.strong_mixing)) return null;
  return h("p", { class: "hint", "data-key": "strong-mixing" },
    `The joint dampers mix the sway modes strongly (by ${num(modes.damper_mixing, 2)}): `
    + "the modes' estimates are rough here, and the map is worked out on the whole chain.");
}

/** Kapitza's closed-form estimates beside the exact values of the same things. */
function estimates(result) {
  const est = result.estimates;
  if (!est) return null;
  const inv = result.inverted || {};
  const hang = result.hanging || {};
  const ends = inv.window_ends || {};
  const exactEdge = (win, kind, show) => {
    if (!Array.isArray(win)) return "not stable here";
    return kind === "edge" ? show(win) : "beyond the rig's limit";
  };
  const rows = [
    ["Inverted needs more than", rpm(est.kapitza_min_speed_rpm),
      exactEdge(inv.speed_window_rpm, ends.speed_low, (w) => rpm(w[0]))],
    ["Inverted lost above a stroke of", mm(est.max_stroke_estimate_m),
      exactEdge(inv.stroke_window_m, ends.stroke_high, (w) => mm(w[1]))],
    ["Inverted slow sway", est.inverted_slow_frequency_hz == null ? "none (unstable)" : hz(est.inverted_slow_frequency_hz),
      inv.stable ? hz(inv.slow_frequency_hz) : "not stable"],
    ["Hanging slow sway", hz(est.hanging_slow_frequency_hz),
      hang.stable ? hz(hang.slow_frequency_hz) : "not stable"],
    ["Equivalent pendulum length", mm(est.l_eq_m), ""],
  ];
  if (est.effective_barrier_J > 0) {
    rows.push(["Knock it survives", `${num(est.knock_estimate_rad_s, 3)} rad/s`, ""]);
    // Display only: the angle in degrees, as people measure it at the rig.
    rows.push(["Recovers from a release below", `${num(est.release_angle_estimate_rad * 180 / Math.PI, 3)}°`, ""]);
  }
  return h("section", { class: "estimates", "aria-labelledby": "est-h" },
    h("h3", { id: "est-h" }, "Quick estimates beside the exact values"),
    h("p", { class: "hint" }, "Kapitza's averaging treats the drive as fast and the links as one rigid "
      + "pendulum: a guide to what moves the result, not the answer."),
    mixed(result.modes),
    h("table", { class: "est-table" },
      h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Quantity"),
        h("th", { scope: "col" }, "Estimate"), h("th", { scope: "col" }, "Exact"))),
      h("tbody", {}, rows.map(([label, guess, exact]) => h("tr", {},
        h("th", { scope: "row" }, label), h("td", {}, guess), h("td", {}, exact || "—"))))));
}

/** The core's cautions (the same words as the command line) replace the page's opening list. */
export function showCautions(list, cautions) {
  if (list.dataset.source === "core") return;
  replaceChildren(list, cautions.map((text) => h("li", {}, text)));
  list.dataset.source = "core";
}

/**
 * The check report in ``el`` and the verdict strip; ``onCautions(list)`` gets the core's
 * cautions, ``onGoto(path)`` is asked to focus a field the strip names.
 */
export function createReport(el, strip, onCautions = () => {}, onGoto = () => {}) {
  const status = h("p", { class: "report-status", role: "status" });
  // Screen readers hear the verdict when it changes, not the whole report on every edit.
  const announce = h("p", { class: "visually-hidden", role: "status" });
  const bar = h("progress", { class: "report-progress", max: 1, "aria-label": "Check progress", hidden: true });
  const body = h("div", { class: "report-body" }, el.querySelector(".empty") || "");
  replaceChildren(el, status, announce, bar, body);

  function setState(name, words, problem = null) {
    el.dataset.state = name;
    el.setAttribute("aria-busy", name === "running" || name === "pending" ? "true" : "false");
    status.textContent = words || "";
    status.hidden = !words;
    strip.dataset.state = name;
    strip.querySelector(".strip-stale").hidden = name !== "stale";
    strip.querySelector(".strip-fix").hidden = !problem;
    if (problem) stripNames(problem);
    else strip.querySelector(".strip-stale").textContent = "results are from the last good rig";
  }

  /** While the rig has a problem no verdict looks current: the strip says which field. */
  function stripNames(problem) {
    strip.querySelector(".strip-stale").textContent = `Check paused: ${describePath(problem.path)}: `
      + `${problem.message}`;
    strip.querySelector(".strip-fix").onclick = () => onGoto(problem.path);
  }

  function updateStrip(result) {
    const said = Object.keys(EQUILIBRIA).map((name) => `${EQUILIBRIA[name].title}: `
      + `${result[name] && result[name].stable ? EQUILIBRIA[name].yes : EQUILIBRIA[name].no}.`).join(" ");
    if (announce.textContent !== `Verdict: ${said}`) announce.textContent = `Verdict: ${said}`;
    for (const name of Object.keys(EQUILIBRIA)) {
      const item = strip.querySelector(`[data-eq="${name}"]`);
      const stable = Boolean(result[name] && result[name].stable);
      item.dataset.stable = String(stable);
      item.querySelector(".strip-word").textContent = stable ? EQUILIBRIA[name].yes : EQUILIBRIA[name].no;
    }
  }

  const hasResult = () => el.dataset.result !== undefined;
  let shown = null; // the reply on view, to write again when the display units change
  let problem = null; // the first problem of a stale rig, named by the strip

  return {
    pending() {
      if (hasResult()) setState("pending", "Updating…");
    },
    running() {
      setState("running", hasResult() ? "Updating to your latest edit…" : "Checking the rig…");
    },
    progress({ fraction }) {
      bar.hidden = !Number.isFinite(fraction);
      if (Number.isFinite(fraction)) bar.value = fraction;
    },
    show(reply) {
      shown = reply;
      problem = null;
      const result = reply.result;
      bar.hidden = true;
      el.dataset.result = JSON.stringify(result);
      el.dataset.rig = JSON.stringify(reply.rig); // the rig as the core read it (SI)
      replaceChildren(body,
        h("p", { class: "operating" },
          "At ", h("strong", {}, rpm(result.speed_rpm)), ` (${num(result.frequency_hz)} Hz) with a `,
          h("strong", {}, mm(result.stroke_m)), ` ${result.waveform || ""} stroke, the pivot's peak `
          + "acceleration is ", h("strong", {}, accel(result.peak_accel_m_s2)),
          ` (${num(result.peak_accel_g, 3)} g).`),
        h("div", { class: "eq-cards" },
          Object.keys(EQUILIBRIA).map((name) => equilibriumCard(name, result[name] || {}))),
        tiltTolerance(result),
        result.converged === false
          ? h("p", { class: "eq-warning" }, "Some results did not meet their accuracy check; see the notes.")
          : null,
        estimates(result),
        h("p", { class: "safety-pointer" }, "Before running the rig, read ",
          h("a", { href: "#safety-h" }, "Before you run the rig"), "."),
        reply.report_text
          ? h("details", { class: "report-text" },
            h("summary", {}, "The same report in the command line's words"),
            h("pre", {}, reply.report_text))
          : null);
      if (Array.isArray(reply.cautions) && reply.cautions.length) onCautions(reply.cautions);
      updateStrip(result);
      delete el.dataset.source;
      setState("fresh", "");
    },
    /**
     * A result not yet from this engine run: worked out when the page was built (``build``,
     * the demo rig) or on the last visit for this same rig (``last-visit``). It shows at once,
     * marked, and the engine's own result replaces it (data-state "cached" -> "fresh").
     */
    showCached(reply, source) {
      this.show(reply);
      el.dataset.source = source;
      setState("cached", {
        build: "Worked out when this page was built, for the demo rig: the engine confirms it in a moment.",
        link: "Worked out by the page that made this link, for this same rig: the engine confirms it in a moment.",
      }[source] || "From your last visit, for this same rig: the engine confirms it in a moment.");
    },
    stale(problems) {
      bar.hidden = true;
      const n = problems.length;
      setState("stale", hasResult()
        ? `Showing the last good result: ${n} problem${n === 1 ? "" : "s"} in the rig sheet (marked there).`
        : `No result yet: ${n} problem${n === 1 ? "" : "s"} in the rig sheet (marked there).`,
      problems[0] || null);
      problem = problems[0] || null;
    },
    /** The same reply written again in the units now chosen; its state and words stay. */
    rewrite() {
      if (!shown) return;
      const { state, source } = el.dataset;
      const words = status.textContent;
      this.show(shown);
      if (source) el.dataset.source = source;
      if (state !== "fresh") setState(state, words, state === "stale" ? problem : null);
    },
    failed(message) {
      bar.hidden = true;
      setState("stale", `The check did not finish: ${message}${hasResult() ? " The last good result stays below." : ""}`);
    },
    unavailable() {
      setState(hasResult() ? "stale" : "off", hasResult()
        ? "The engine stopped: the result below is the last one it gave."
        : "No results while the engine is not running (see the message at the top).");
    },
  };
}
