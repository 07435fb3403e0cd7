// Check the model against the real rig: a log of angles from the rig (a file,
// pasted text or the invented sample) goes to the core as text in a `fit` motion
// job, stepped with progress and Cancel. The core reads the log and fits; this
// file only words its reply: the fitted numbers, the misfit before and after,
// whether it settled, its plot and its words. "Use the fitted numbers" hands the
// core's fitted rig to the page's replace-with-undo path.

import { h, replaceChildren } from "../lib/dom.js";
import { LINK_UNITS } from "../state/draft.js";
import { Runner, busyMark, failedWords, num, statusLine } from "../engine/motion-job.js";
import { LINK_FIELDS } from "../state/rig-fields.js";
import { displayUnits, shown } from "../state/units.js";
import { svgNode } from "./schematic-view.js";
import { registerCsv } from "./export.js";
import { lastSession } from "./last-session.js";

const DEG = 180 / Math.PI; // display only: the core's misfit is in radians
const SAMPLE_URL = "sample-decay.csv";
const MAX_FILE_BYTES = 16 * 1024 * 1024; // a larger file would stall the page; the core reads 200,000 rows at most
// Request fields that are the fit's own: problems there belong beside the log, not the rig sheet.
const FIT_FIELDS = /^(log|reference|parameters|max_iterations|drive_stopped)(\b|$)/;
const PATH = /^links\[(\d+)\]\.(\w+)$/;

// The kind of each fitted number, for the display units (state/units.js).
const KINDS = { joint_damping_N_m_s: "damping", joint_friction_N_m: "torque", extra_inertia_kg_m2: "inertia",
  length_m: "length", rod_mass_kg: "mass" };

/** "links[0].joint_damping_N_m_s" -> {name: "Link 1: joint damping", kind: "damping"}. */
function describe(path) {
  const m = PATH.exec(path);
  if (!m || !LINK_FIELDS[m[2]]) return { name: path, kind: null };
  return { name: `Link ${Number(m[1]) + 1}: ${LINK_FIELDS[m[2]].label.toLowerCase()}`, kind: KINDS[m[2]] || null,
    si: LINK_UNITS[m[2]] };
}

/** A fitted number in the display units: [number, unit]; SI as given when its kind is unknown. */
function inUnits(value, what) {
  return what.kind ? shown(value, what.kind) : [value, what.si || ""];
}

/** The fitted numbers' table, in the display units (data-* keep the SI numbers). */
function fitTable(res) {
  return h("table", { class: "est-table fit-table" },
    h("caption", { class: "visually-hidden" }, "Fitted numbers"),
    h("thead", {}, h("tr", {}, h("th", { scope: "col" }, "Number"),
      h("th", { scope: "col" }, "Before the fit"), h("th", { scope: "col" }, "Fitted ± standard error"))),
    h("tbody", {}, res.parameters.map((p) => {
      const what = describe(p.path);
      const [start, unit] = inUnits(p.start, what);
      const [value] = inUnits(p.value, what);
      const known = p.std_error !== null && Number.isFinite(p.std_error);
      const [error] = known ? inUnits(p.std_error, what) : [null];
      return h("tr", { "data-path": p.path }, h("th", { scope: "row" }, what.name),
        h("td", { "data-start": p.start }, `${num(start)} ${unit}`),
        h("td", { "data-value": p.value, "data-std-error": known ? p.std_error : "", "data-unit": unit },
          `${num(value)} ${unit} `,
          known ? `± ${num(error, 2)} ${unit}` : h("span", { class: "fit-unknown" }, "(not determined by this log)")));
    })));
}

/** Where a problem is, in words: "Data row 12, column angle_deg". */
function where(path) {
  let m = /^log\.header\[(\d+)\]$/.exec(path);
  if (m) return `Header row, column ${Number(m[1]) + 1}`;
  m = /^log\[(\d+)\](?:\.(.+))?$/.exec(path);
  if (m) return m[2] ? `Data row ${m[1]}, column ${m[2]}` : `Data row ${m[1]}`;
  return { "log.header": "Header row", log: "The log", reference: "Where the angles are zero",
    parameters: "Numbers to fit", drive_stopped: "The drive stood still" }[path] || "The fit";
}

/**
 * @param {object} els {form, file, sample, log, source, msgs, stopped, go, cancel, progress, status,
 *                      out, plot, apply, applyNote, undo}
 * @param {object} deps {engine, getRig(), useRig(rig), restoreRig()} (useRig: replace the rig,
 *                      keeping the old one; restoreRig: bring the old one back)
 */
export function createFitView(els, { engine, getRig, useRig, restoreRig }) {
  const runner = new Runner(engine);
  const status = statusLine(els.status, els.progress);
  const busy = busyMark(els.cancel, els.out);
  const state = {
    runKey: "", // the rig being fitted
    fitKey: "", // the rig of the fit on show
    appliedKey: "", // the rig sheet once the fitted numbers went in
    reply: null, // the fit on show
    previousLog: null, // log text replaced by a file or the sample, to bring back
    lastSession: false, // the fit on show is the last session's, not worked out on this visit
  };

  // the plot's numbers (the core's CSV: every sample, logged and fitted, from the log's zero)
  registerCsv(els.plot.id, () => state.reply?.csv || null);

  // ------------------------------------------------------------ the log

  function showProblems(problems) {
    els.log.setAttribute("aria-invalid", problems.length ? "true" : "false");
    replaceChildren(els.msgs, problems.length ? [
      h("p", { class: "msg is-problem" }, problems.length === 1 ? "The log has a problem (your text is kept as it is):"
        : `The log has ${problems.length} problems (your text is kept as it is):`),
      h("ul", {}, problems.map((p) => h("li", { "data-path": p.path },
        h("strong", {}, `${where(p.path)}`), " ", h("code", {}, p.path), `: ${p.message}`))),
    ] : []);
  }

  /** New log text from a file or the sample; what was there can be brought back. */
  function putLog(text, source) {
    const before = els.log.value;
    state.previousLog = before.trim() && before !== text ? before : null;
    els.log.value = text;
    showProblems([]);
    replaceChildren(els.source, h("span", {}, source), state.previousLog === null ? null : [
      h("button", { type: "button", class: "quiet", id: "fit-log-back", on: { click: bringBackLog } },
        "Bring back the log text you had")]);
  }

  function bringBackLog() {
    if (state.previousLog === null) return;
    putLog(state.previousLog, "Your earlier log text is back.");
    els.log.focus();
  }

  async function openFile() {
    const file = els.file.files[0];
    els.file.value = "";
    if (!file) return;
    if (file.size > MAX_FILE_BYTES) {
      replaceChildren(els.source, `${file.name} is ${num(file.size / 1e6, 3)} MB: too large to read here. `
        + "Keep every few rows (the fit reads at most 200,000), or use the command line.");
      return;
    }
    try {
      putLog(await file.text(), `Loaded ${file.name}.`);
    } catch (err) {
      replaceChildren(els.source, `${file.name} could not be read: ${err.message || err}`);
    }
  }

  async function loadSample() {
    let text;
    try {
      const response = await fetch(SAMPLE_URL);
      if (!response.ok) throw new Error(`HTTP ${response.status}`);
      text = await response.text();
    } catch (err) {
      replaceChildren(els.source, `The sample log could not be loaded: ${err.message || err}`);
      return;
    }
    putLog(text, "Invented sample log, not a measurement: made up with the engine for trying the fit "
      + "(the demo rig hanging, let go from 25° with the drive stopped, its joint damping three times "
      + "the demo's, a little noise added). Its angles are zero hanging; fit the joint damping.");
    for (const input of els.form.querySelectorAll('input[name="fit-zero"]')) input.checked = input.value === "hanging";
  }

  // ------------------------------------------------------------ fitting

  function request() {
    const parameters = [...els.form.querySelectorAll('input[name="fit-what"]:checked')].map((c) => c.value);
    const zero = els.form.querySelector('input[name="fit-zero"]:checked');
    return { log: els.log.value, reference: zero ? zero.value : "hanging", parameters,
      drive_stopped: els.stopped.checked };
  }

  async function fit() {
    const rig = getRig();
    if (!rig) return;
    const fields = request();
    if (!fields.log.trim()) {
      showProblems([{ path: "log", message: "is empty: open a log file, paste one in, or try the sample" }]);
      els.log.focus();
      return;
    }
    if (!fields.parameters.length) {
      status("Tick at least one number to fit.");
      return;
    }
    state.runKey = JSON.stringify(rig);
    busy(true);
    els.go.disabled = true;
    status("Fitting: reading the log…", 0);
    const asked = displayUnits(); // the units of the words the core writes
    const reply = await runner.start("fit", { rig, ...fields, units: asked },
      (step) => status(`Fitting (${Math.round(step.fraction * 100)}%), ${step.stage || "working"}`, step.fraction));
    if (reply === null) return; // stopped: Cancel or a rig edit
    busy(false);
    els.go.disabled = false;
    if (!reply.ok) {
      const own = (reply.problems || []).filter((p) => FIT_FIELDS.test(p.path));
      showProblems(own);
      status(own.length ? "The fit could not start: see the problems beside the log."
        : failedWords(reply, "fit"), 0);
      if (own.length) els.log.focus();
      return;
    }
    showProblems([]);
    reply.units = asked;
    show(reply, state.runKey);
    keep();
    status(reply.result.converged ? "Fit done." : "Fit done, but it did not settle: see below.", 1);
  }

  // ------------------------------------------------------------ the result

  function show(reply, rigKey) {
    const res = reply.result;
    state.reply = reply;
    state.fitKey = rigKey;
    state.appliedKey = "";
    state.lastSession = false;
    delete els.out.dataset.kept;
    els.out.dataset.result = JSON.stringify(res);
    replaceChildren(els.out,
      fitTable(res),
      h("dl", { class: "facts fit-facts" },
        h("div", { class: "row", "data-key": "rms" }, h("dt", {}, "Misfit (RMS angle)"),
          h("dd", { "data-start": res.rms_start_rad, "data-value": res.rms_rad },
            `${num(res.rms_start_rad * DEG, 3)}° before the fit, ${num(res.rms_rad * DEG, 3)}° fitted`)),
        h("div", { class: "row", "data-key": "settled" }, h("dt", {}, "Settled"),
          h("dd", { "data-value": String(res.converged) }, res.converged
            ? `Yes, after ${res.iterations} iteration(s): ${res.message}.`
            : `No: ${res.message}. Treat these numbers with care.`,
          h("span", { class: "sub" }, `${res.samples} samples, ${res.simulations} simulations.`,
            skippedWords(res.skipped_columns))))),
      h("details", { class: "report-text" }, h("summary", {},
        `The same in the command line's words (${reply.units || "metric"} units)`),
        h("pre", {}, reply.report_text)));
    els.plot.hidden = false;
    els.plot.replaceChildren(svgNode(reply.svg, "Logged and fitted angles against time"));
    els.plot.dataset.axes = JSON.stringify(reply.axes);
    els.apply.hidden = false;
    mark("fresh");
  }

  /** The log's columns the fit did not read (a result kept from an older page has none). */
  function skippedWords(columns) {
    return columns && columns.length ? ` Columns of the log not read: ${columns.join(", ")}.` : "";
  }

  function stateFor(rigKey) {
    return rigKey === state.fitKey ? "fresh" : rigKey === state.appliedKey ? "applied" : "stale";
  }

  /** fresh: of the rig on the sheet; applied: its numbers are on the sheet; stale: of another rig. */
  function mark(shown) {
    const marked = shown === "fresh" && state.lastSession ? "cached" : shown;
    els.out.dataset.state = marked;
    els.plot.dataset.state = marked;
    els.apply.disabled = shown !== "fresh";
    els.undo.hidden = shown !== "applied";
    els.applyNote.textContent = {
      fresh: "Puts the fitted rig in the rig sheet; “Bring back my previous rig” undoes it.",
      applied: "The fitted numbers are in the rig sheet; the check, map and motion follow them.",
      stale: "The rig sheet has changed since this fit: fit again before using its numbers.",
    }[shown];
  }

  function apply() {
    if (!state.reply || els.apply.disabled) return;
    useRig(state.reply.fitted_rig);
    state.appliedKey = JSON.stringify(getRig());
    mark("applied");
    keep();
    els.undo.focus(); // the pressed button is disabled now: keyboard focus stays beside it
    status("The fitted numbers are in the rig sheet.", 1);
  }

  els.form.addEventListener("submit", (event) => {
    event.preventDefault();
    fit();
  });
  els.file.addEventListener("change", openFile);
  els.sample.addEventListener("click", loadSample);
  els.apply.addEventListener("click", apply);
  els.undo.addEventListener("click", () => {
    restoreRig();
    mark(stateFor(JSON.stringify(getRig())));
    status("Your previous rig is back in the rig sheet.");
    (els.apply.disabled ? els.go : els.apply).focus();
  });
  els.cancel.addEventListener("click", async () => {
    await runner.stop();
    busy(false);
    els.go.disabled = false;
    status("Fit cancelled: nothing was changed.", 0);
  });

  // The fit on show for the next visit: its rig, and the sheet's once its numbers went in.
  const kept = lastSession("fit", els.out);
  const keep = () => kept.keep(state.fitKey, { reply: state.reply, appliedKey: state.appliedKey },
    { reply: { ...state.reply, csv: null }, appliedKey: state.appliedKey });
  state.fitKey = kept.restore(({ reply, appliedKey }) => {
    show(reply, "");
    state.appliedKey = appliedKey;
  });
  state.lastSession = state.fitKey !== "";
  if (state.lastSession) {
    mark("fresh"); // the plot marked too; the rig's arrival marks them again
    status("Fit kept from your last session, below: fit again to refresh it.", 1);
  }

  return {
    /** As on a first visit (the tests' reset): a running fit stopped, no fit or earlier log kept. */
    forget() {
      runner.stop();
      Object.assign(state, { runKey: "", fitKey: "", appliedKey: "", reply: null, previousLog: null,
        lastSession: false });
    },
    /** The display units changed: the fitted numbers are written again in them. */
    unitsChanged() {
      const table = els.out.querySelector("table.fit-table");
      if (state.reply && table) table.replaceWith(fitTable(state.reply.result));
    },
    /** The rig changed: a running fit stops; a fit on show is marked as of its own rig. */
    rigChanged(rig) {
      const key = JSON.stringify(rig);
      const stopped = runner.running && key !== state.runKey;
      if (stopped) {
        runner.stop();
        busy(false);
        els.go.disabled = false;
        status("The rig changed: the fit was stopped. Start it again for the new rig.", 0);
      }
      if (!state.reply) return;
      const now = stateFor(key);
      if (now === "stale" && els.out.dataset.state !== "stale" && !stopped && !runner.running) {
        status("The fit shown is of the rig before your last edit.");
      }
      mark(now);
    },
  };
}
