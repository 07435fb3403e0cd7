// The run verdict: shows the core's check result (reply.result of the bridge
// `check` op, the JSON of `shakestill check --json`) in words a technician can
// act on. The element carries that JSON in data-result, replaced with every
// new result; a bad edit keeps the old result on view, marked stale.

import { h, replaceChildren } from "./dom.js";

/** A number for reading: 4 significant figures, no trailing zeros. */
export function num(x, digits = 4) {
  if (x === null || x === undefined || Number.isNaN(x)) return "n/a";
  if (!Number.isFinite(x)) return x > 0 ? "infinite" : "-infinite";
  if (x === 0) return "0";
  const text = Math.abs(x) >= 1e6 || Math.abs(x) < 1e-3 ? x.toExponential(digits - 1) : x.toPrecision(digits);
  return text.includes("e") ? text.replace(/\.?0+e/, "e") : text.replace(/(\.\d*?)0+$/, "$1").replace(/\.$/, "");
}

// Strokes are shown in millimetres, the unit a technician sets them in.
const mm = (m) => `${num(m * 1000)} mm`;
const rpm = (r) => `${num(r)} rpm`;

function windowText(win, show) {
  if (!Array.isArray(win)) return "none (not stable here, or outside the limits)";
  return `${show(win[0])} to ${show(win[1])}`;
}

const EQUILIBRIA = {
  inverted: {
    title: "Inverted (pendulum up)",
    yes: "Stays up",
    no: "Falls over",
    yesText: "The upright position is stable at this speed and stroke: small knocks die away or stay small.",
    noText: "The upright position is not stable here: the pendulum will fall. Change speed or stroke "
      + "toward the windows below (or see the hints), and keep guards in place while trying.",
  },
  hanging: {
    title: "Hanging (pendulum down)",
    yes: "Hangs steady",
    no: "Swings up",
    yesText: "The hanging position is stable: the drive does not pump the swing.",
    noText: "The hanging position is unstable at this speed and stroke (parametric resonance): "
      + "the swing grows by itself. Expect large motion and load on the joints.",
  },
};

function row(label, value, note) {
  return h("div", { class: "row" }, h("dt", {}, label), h("dd", {}, value, note ? h("span", { class: "note" }, ` ${note}`) : null));
}

function marginsNote(eq, key) {
  const m = eq.margins && eq.margins[key];
  if (!m || typeof m !== "object") return null;
  const parts = [];
  if (Number.isFinite(m.below_percent)) parts.push(`${num(m.below_percent, 3)}% below`);
  if (Number.isFinite(m.above_percent)) parts.push(`${num(m.above_percent, 3)}% above`);
  return parts.length ? `(room: ${parts.join(", ")})` : null;
}

function equilibriumCard(name, eq) {
  const words = EQUILIBRIA[name];
  const stable = Boolean(eq && eq.stable);
  const state = stable ? "stable" : "unstable";
  return h("article", { class: `eq-card is-${state}`, "data-eq": name, "aria-labelledby": `eq-${name}` },
    h("h3", { id: `eq-${name}` }, words.title, " ",
      h("span", { class: "verdict-word" }, stable ? words.yes : words.no)),
    h("p", { class: "eq-text" }, stable ? words.yesText : words.noText),
    eq && eq.converged === false
      ? h("p", { class: "eq-warning" }, `Not fully converged: ${eq.message || "treat this result with care"}.`)
      : null,
    h("dl", { class: "facts" },
      row("Speed window", windowText(eq.speed_window_rpm, rpm), marginsNote(eq, "speed")),
      row("Stroke window", windowText(eq.stroke_window_m, mm), marginsNote(eq, "stroke")),
      row("Slow wobble", eq.slow_frequency_hz == null ? "none (not stable)" : `${num(eq.slow_frequency_hz)} Hz`,
        "the slow swing you see on top of the buzz"),
      row("Largest Floquet multiplier", num(eq.max_multiplier, 6), "below 1 is stable")));
}

/** Closed-form estimates next to the exact values, if the core gives them. */
function estimates(result) {
  const est = result.estimates;
  if (!est || typeof est !== "object") return null;
  const rows = Object.entries(est).filter(([, v]) => typeof v === "number" || v === null)
    .map(([key, value]) => row(key.replace(/_/g, " "), num(value)));
  if (!rows.length) return null;
  return h("section", { class: "estimates", "aria-labelledby": "est-h" },
    h("h3", { id: "est-h" }, "Quick estimates (closed form, for comparison)"),
    h("dl", { class: "facts" }, rows));
}

function cautions(result) {
  const list = Array.isArray(result.cautions) ? result.cautions : [];
  if (!list.length) return null;
  return h("section", { class: "report-cautions", "aria-labelledby": "rc-h" },
    h("h3", { id: "rc-h" }, "Cautions for this rig"),
    h("ul", {}, list.map((c) => h("li", {}, typeof c === "string" ? c : c.message || JSON.stringify(c)))));
}

export function createReport(el, strip) {
  const status = h("p", { class: "report-status", role: "status" });
  const bar = h("progress", { class: "report-progress", max: 1, "aria-label": "Check progress", hidden: true });
  const body = h("div", { class: "report-body" }, el.querySelector(".empty") || "");
  replaceChildren(el, status, bar, body);

  function setState(name, words) {
    el.dataset.state = name;
    el.setAttribute("aria-busy", name === "running" || name === "pending" ? "true" : "false");
    status.textContent = words || "";
    status.hidden = !words;
    strip.dataset.state = name;
    strip.querySelector(".strip-stale").hidden = name !== "stale";
  }

  function updateStrip(result) {
    for (const name of Object.keys(EQUILIBRIA)) {
      const item = strip.querySelector(`[data-eq="${name}"]`);
      const stable = Boolean(result[name] && result[name].stable);
      item.dataset.stable = String(stable);
      item.querySelector(".strip-word").textContent = stable ? EQUILIBRIA[name].yes : EQUILIBRIA[name].no;
    }
  }

  const hasResult = () => el.dataset.result !== undefined;

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
      const result = reply.result;
      bar.hidden = true;
      el.dataset.result = JSON.stringify(result);
      const drive = (reply.rig && reply.rig.drive) || {};
      replaceChildren(body,
        h("p", { class: "operating" },
          "At ", h("strong", {}, rpm(drive.speed_rpm)), ` (${num(result.frequency_hz)} Hz) with a `,
          h("strong", {}, mm(drive.stroke_m)), " stroke, the pivot's peak acceleration is ",
          h("strong", {}, `${num(result.peak_accel_m_s2)} m/s²`), "."),
        h("div", { class: "eq-cards" },
          Object.keys(EQUILIBRIA).map((name) => equilibriumCard(name, result[name] || {}))),
        estimates(result),
        cautions(result),
        reply.report_text
          ? h("details", { class: "report-text" },
            h("summary", {}, "The same report in the command line's words"),
            h("pre", {}, reply.report_text))
          : null);
      updateStrip(result);
      setState("fresh", "");
    },
    stale(problems) {
      bar.hidden = true;
      const n = problems.length;
      setState("stale", hasResult()
        ? `Showing the last good result: ${n} problem${n === 1 ? "" : "s"} in the rig sheet (marked there).`
        : `No result yet: ${n} problem${n === 1 ? "" : "s"} in the rig sheet (marked there).`);
    },
    failed(message) {
      bar.hidden = true;
      setState("stale", `The check did not finish: ${message}${hasResult() ? " The last good result stays below." : ""}`);
    },
    unavailable(message) {
      setState("stale", `No results: the engine is not running (${message}).`);
    },
  };
}
