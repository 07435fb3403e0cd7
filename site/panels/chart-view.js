// The stability map: the core's chart, computed as a job in the worker
// (job_start, then job_step calls that each return the picture so far), with
// a progress bar and Cancel; the only interaction added here is the cursor
// read-out (the `point` op) and moving the operating point, both through the
// axis mapping the core returns with each picture. No physics here.

import { h, replaceChildren } from "../lib/dom.js";
import { saveCsv, savePng, saveSvg } from "./export.js";
import { svgNode } from "./schematic-view.js";
import { Cancelled } from "../engine/worker-client.js";
import { displayUnits, lengthShown } from "../state/units.js";

const STEP_BUDGET_MS = 150; // one job step: short enough for a check to slip in between
const POINT_THROTTLE_MS = 90; // read-out requests while the cursor moves
const KEY_STEP = 0.01; // arrow keys move the cursor by this share of an axis (Shift: 10x)
const SAME_PICK_PX = 12; // a second click or tap this near the first one applies it (a fingertip)
const SVG_NS = "http://www.w3.org/2000/svg";

const AXIS_WORDS = { stroke: "stroke", accel: "peak acceleration" };

/** Value on one axis of the core's mapping for an SVG coordinate, and back. */
export const toValue = (a, px) => a.min + ((px - a.px_min) / (a.px_max - a.px_min)) * (a.max - a.min);
export const toPx = (a, v) => a.px_min + ((v - a.min) / (a.max - a.min)) * (a.px_max - a.px_min);

/** Round a value to a step well under a tenth of a pixel's worth, as a plain number. */
function rounded(value, perPx) {
  const step = 10 ** Math.floor(Math.log10(Math.abs(perPx) / 10));
  const digits = Math.max(0, -Math.round(Math.log10(step)));
  return Number((Math.round(value / step) * step).toFixed(digits));
}

function fmt(x, digits = 6) {
  return Number.isFinite(x) ? String(Number(x.toPrecision(digits))) : "none";
}

const strokeText = (m) => {
  const [value, unit] = lengthShown(m);
  return `stroke ${fmt(value, 5)} ${unit}`;
};

/**
 * @param {object} els  {holder, progress, status, cancel, redraw, axisInputs, readout, note, table(chart)}
 * @param {object} deps {engine, onPick({speed_rpm, stroke_m}), currentRig()}
 */
export function createChartView(els, { engine, onPick }) {
  const state = {
    rig: null, // the rig the map is (being) drawn for
    key: "", // that rig without its operating point: only a change here redraws the map
    yAxis: "stroke",
    run: 0, // bumps for every job; steps of older runs stop
    job: null, // the worker's job number while it runs
    axes: null,
    svg: null,
    chart: null, // the core's chart data behind the picture
    cursor: null, // {x, y} in axis values
    picked: null, // {values, clientX, clientY}: a clicked point shown with its verdict, not applied
    operating: null, // {speed_rpm, stroke_m, peak_accel_m_s2} from the last check
    overlay: null, // (svg, axes) -> an SVG group drawn over the map (the plan's robust region), or null
    point: { seq: 0, timer: 0, last: 0 },
  };

  // ------------------------------------------------------------ the job

  function status(words, fraction = null) {
    els.status.textContent = words;
    if (fraction !== null) els.progress.value = fraction;
  }

  async function stop(words) {
    const job = state.job;
    state.run += 1;
    state.job = null;
    els.cancel.hidden = true;
    els.holder.setAttribute("aria-busy", "false");
    if (words) status(words);
    if (job !== null) {
      try {
        await engine.request("job_cancel", { job });
      } catch (err) {
        if (!(err instanceof Cancelled)) console.warn("job_cancel:", err);
      }
    }
  }

  async function draw() {
    if (!state.rig) return;
    await stop(null);
    const run = state.run;
    const live = () => run === state.run;
    els.holder.dataset.state = "running";
    els.holder.setAttribute("aria-busy", "true");
    els.cancel.hidden = false;
    status(`Drawing the map (${AXIS_WORDS[state.yAxis]} up the side): rough picture first`, 0);
    try {
      const started = await engine.request("job_start", { kind: "chart", rig: state.rig, y_axis: state.yAxis,
        units: displayUnits() });
      if (!live()) {
        if (started.ok) engine.request("job_cancel", { job: started.job }).catch(() => {});
        return;
      }
      if (!started.ok) {
        finish("stale", started.problems
          ? "The map waits for a rig without problems (see the marked fields)."
          : `The map could not be drawn: ${started.error}`);
        return;
      }
      state.job = started.job;
      for (;;) {
        const step = await engine.request("job_step", { job: started.job, budget_ms: STEP_BUDGET_MS });
        if (!live()) return;
        if (!step.ok) {
          finish("stale", `The map stopped: ${step.error || step.problems.map((p) => p.message).join("; ")}`);
          return;
        }
        if (step.svg) show(step);
        if (step.done) {
          state.job = null;
          finish("done", `Map complete: ${step.chart.rows.length} rows.`);
          return;
        }
        status(`Drawing the map: ${Math.round(step.fraction * 100)}%, ${step.chart ? step.chart.rows.length : 0} rows `
          + "(spread over the map first, then filled in)", step.fraction);
      }
    } catch (err) {
      if (live() && !(err instanceof Cancelled)) finish("stale", `The map stopped: ${err.message}`);
    }
  }

  function finish(holderState, words) {
    els.holder.dataset.state = holderState;
    els.holder.setAttribute("aria-busy", "false");
    els.cancel.hidden = true;
    if (holderState === "done") els.progress.value = 1;
    status(words);
  }

  function show(step) {
    const svg = svgNode(step.svg, "Stability map");
    svg.append(cursorMark());
    els.holder.replaceChildren(svg);
    state.svg = svg;
    state.chart = step.chart;
    for (const button of els.save) button.disabled = false;
    state.axes = step.axes;
    els.holder.dataset.axes = JSON.stringify(step.axes);
    els.holder.dataset.rows = String(step.chart.rows.length);
    els.table(step.chart); // the map's text alternative
    els.note.textContent = step.chart.notes.length
      ? `How the map is made: ${step.chart.notes.join("; ")}.` : "";
    placeOperatingPoint();
    placeOverlay();
    placeCursor();
  }

  /** The overlay over the picture, redrawn on every new picture (under the cursor). */
  function placeOverlay() {
    if (!state.svg) return;
    state.svg.querySelector(":scope > .robust-overlay")?.remove();
    const group = state.overlay && state.axes ? state.overlay(state.svg, state.axes) : null;
    if (group) state.svg.insertBefore(group, state.svg.querySelector(":scope > .chart-cursor"));
    els.holder.dataset.overlay = group ? "shown" : "none";
  }

  // ------------------------------------------------------------ marks on the picture

  function cursorMark() {
    const g = document.createElementNS(SVG_NS, "g");
    g.setAttribute("class", "chart-cursor");
    g.setAttribute("visibility", "hidden");
    g.setAttribute("pointer-events", "none");
    for (const [x1, y1, x2, y2] of [[-12, 0, 12, 0], [0, -12, 0, 12]]) {
      const line = document.createElementNS(SVG_NS, "line");
      Object.entries({ x1, y1, x2, y2 }).forEach(([k, v]) => line.setAttribute(k, v));
      g.append(line);
    }
    const ring = document.createElementNS(SVG_NS, "circle");
    ring.setAttribute("r", "4");
    g.append(ring);
    return g;
  }

  function placeCursor() {
    const mark = state.svg?.querySelector(".chart-cursor");
    if (!mark) return;
    if (!state.cursor) {
      mark.setAttribute("visibility", "hidden");
      return;
    }
    mark.setAttribute("visibility", "visible");
    mark.setAttribute("transform",
      `translate(${toPx(state.axes.x, state.cursor.x)} ${toPx(state.axes.y, state.cursor.y)})`);
  }

  /** Move the core's operating-point mark to the last checked point (no redraw needed). */
  function placeOperatingPoint() {
    const mark = state.svg?.querySelector(".operating-point");
    const op = state.operating;
    if (!mark || !op || !state.axes) return;
    const circle = mark.querySelector("circle");
    const cx = Number(circle.getAttribute("cx"));
    const cy = Number(circle.getAttribute("cy"));
    const y = state.axes.y.quantity === "stroke_m" ? op.stroke_m : op.peak_accel_m_s2;
    if (!Number.isFinite(y)) return;
    mark.setAttribute("transform",
      `translate(${toPx(state.axes.x, op.speed_rpm) - cx} ${toPx(state.axes.y, y) - cy})`);
  }

  // ------------------------------------------------------------ cursor and read-out

  /** Axis values under a pointer event, or null outside the plotting box. */
  function valuesAt(event) {
    if (!state.svg || !state.axes) return null;
    const m = state.svg.getScreenCTM();
    if (!m) return null;
    const p = new DOMPoint(event.clientX, event.clientY).matrixTransform(m.inverse());
    const { x, y } = state.axes;
    const inside = (a, v) => v >= Math.min(a.px_min, a.px_max) && v <= Math.max(a.px_min, a.px_max);
    if (!inside(x, p.x) || !inside(y, p.y)) return null;
    return { x: toValue(x, p.x), y: toValue(y, p.y) };
  }

  /** Speed and stroke fit for the rig sheet, rounded well under a pixel's worth. */
  function pick(values) {
    const { x, y } = state.axes;
    const perPx = (a) => (a.max - a.min) / (a.px_max - a.px_min);
    const out = { speed_rpm: rounded(values.x, perPx(x)) };
    if (y.quantity === "stroke_m") out.stroke_m = rounded(values.y, perPx(y));
    else out.peak_accel_m_s2 = rounded(values.y, perPx(y));
    return out;
  }

  function moveCursor(values) {
    if (!values) state.picked = null;
    state.cursor = values;
    placeCursor();
    if (!values) {
      els.readout.dataset.state = "idle";
      return;
    }
    const p = pick(values);
    const yText = "stroke_m" in p ? strokeText(p.stroke_m)
      : `peak acceleration ${fmt(p.peak_accel_m_s2 / 9.80665, 4)} g`;
    replaceChildren(els.readout, h("p", { class: "readout-where" }, `Cursor: ${fmt(p.speed_rpm, 6)} rpm, ${yText}`),
      h("p", { class: "readout-wait" }, "Working out both positions at this point…"));
    els.readout.dataset.state = "moving";
    askPoint(p);
  }

  // Throttled: at most one request per POINT_THROTTLE_MS; a reply for an older cursor is dropped.
  function askPoint(p) {
    const seq = ++state.point.seq;
    clearTimeout(state.point.timer);
    const wait = Math.max(0, state.point.last + POINT_THROTTLE_MS - performance.now());
    state.point.timer = setTimeout(async () => {
      state.point.last = performance.now();
      let reply;
      try {
        reply = await engine.request("point", { rig: state.rig, ...p }, { channel: "point" });
      } catch (err) {
        if (err instanceof Cancelled) return;
        reply = { ok: false, error: err.message };
      }
      if (seq !== state.point.seq) return; // the cursor has moved on
      showPoint(p, reply);
    }, wait);
  }

  function showPoint(p, reply) {
    if (!reply.ok) {
      els.readout.dataset.state = "failed";
      replaceChildren(els.readout, h("p", {}, `No read-out here: ${reply.error
        || reply.problems.map((q) => q.message).join("; ")}`));
      return;
    }
    els.readout.dataset.point = JSON.stringify(reply);
    els.readout.dataset.state = "fresh";
    const line = (name, eq) => h("li", { "data-eq": name, class: eq.stable ? "is-stable" : "is-unstable" },
      h("strong", {}, `${name === "inverted" ? "Inverted" : "Hanging"}: ${eq.stable ? "stable" : "unstable"}`),
      `, largest multiplier ${fmt(eq.max_multiplier, 7)}`,
      eq.stable ? `, slow frequency ${fmt(eq.slow_frequency_hz, 5)} Hz` : "",
      eq.converged ? "" : " (not converged: treat with care)");
    replaceChildren(els.readout,
      h("p", { class: "readout-where" },
        `At ${fmt(reply.speed_rpm, 6)} rpm, ${strokeText(reply.stroke_m)}, `
        + `peak acceleration ${fmt(reply.peak_accel_m_s2 / 9.80665, 4)} g`),
      h("ul", { class: "readout-list" }, line("inverted", reply.inverted), line("hanging", reply.hanging)),
      ...(state.picked ? [h("button", { type: "button", id: "chart-apply-point", class: "secondary" },
        "Make this the operating point")] : []),
      h("p", { class: "hint" }, state.picked
        ? "Click or tap here again, or press the button, to make this the operating point."
        : "Click or tap to see this point's verdict, then again to make it the operating point; "
          + "with the keys, Enter."));
    const button = els.readout.querySelector("#chart-apply-point");
    if (button) button.addEventListener("click", () => applyPicked());
  }

  /** A click or tap: the first shows the point and its verdict, a second one near it applies. */
  function clickAt(event, values) {
    const near = state.picked && Math.hypot(event.clientX - state.picked.clientX,
      event.clientY - state.picked.clientY) <= SAME_PICK_PX;
    if (near) {
      applyPicked();
      return;
    }
    state.picked = { values, clientX: event.clientX, clientY: event.clientY };
    moveCursor(values);
  }

  function applyPicked() {
    const values = state.picked && state.picked.values;
    state.picked = null;
    if (!values) return;
    apply(values);
    moveCursor(values); // the read-out again, without the button
  }

  async function apply(values) {
    if (!values) return;
    const p = pick(values);
    if ("stroke_m" in p) {
      onPick(p);
      return;
    }
    // acceleration view: the core turns the acceleration into the stroke that gives it
    let reply;
    try {
      reply = await engine.request("point", { rig: state.rig, ...p }, { channel: "point-apply" });
    } catch (err) {
      if (err instanceof Cancelled) return;
      reply = { ok: false };
    }
    onPick(reply.ok ? { speed_rpm: p.speed_rpm, stroke_m: reply.stroke_m } : { speed_rpm: p.speed_rpm });
  }

  // Pointer events serve mouse, pen and touch alike; a click or tap shows a point's verdict,
  // a second one there applies it. On a touch screen a sideways drag moves the cursor and an
  // up-down swipe scrolls the page.
  // A picked point holds the read-out (and the cursor) until it is applied, another point is
  // picked, or Escape.
  els.holder.addEventListener("pointermove", (event) => {
    if (!state.picked) moveCursor(valuesAt(event));
  });
  els.holder.addEventListener("pointerdown", (event) => {
    const values = valuesAt(event);
    if (values && !state.picked) moveCursor(values);
  });
  els.holder.addEventListener("pointerleave", (event) => {
    if (event.pointerType === "mouse" && !state.picked) moveCursor(null);
  });
  // A click's clientX/Y are whole pixels; the pointer events before it carry the exact point.
  els.holder.addEventListener("click", (event) => {
    const values = valuesAt(event);
    if (values) clickAt(event, state.picked ? values : state.cursor || values);
  });
  els.holder.addEventListener("keydown", (event) => {
    if (!state.axes) return;
    const dirs = { ArrowLeft: [-1, 0], ArrowRight: [1, 0], ArrowUp: [0, 1], ArrowDown: [0, -1] };
    if (event.key === "Escape") {
      moveCursor(null);
      return;
    }
    if (event.key === "Enter" || event.key === " ") {
      event.preventDefault();
      if (state.picked) applyPicked();
      else apply(state.cursor);
      return;
    }
    if (!(event.key in dirs)) return;
    event.preventDefault();
    state.picked = null;
    const { x, y } = state.axes;
    const start = state.cursor || operatingValues() || { x: (x.min + x.max) / 2, y: (y.min + y.max) / 2 };
    const [dx, dy] = dirs[event.key];
    const k = KEY_STEP * (event.shiftKey ? 10 : 1);
    const clamp = (v, a) => Math.min(a.max, Math.max(a.min, v));
    moveCursor({ x: clamp(start.x + dx * k * (x.max - x.min), x), y: clamp(start.y + dy * k * (y.max - y.min), y) });
  });
  els.holder.addEventListener("blur", (event) => {
    if (!els.readout.contains(event.relatedTarget)) moveCursor(null);
  });

  function operatingValues() {
    const op = state.operating;
    if (!op || !state.axes) return null;
    return { x: op.speed_rpm, y: state.axes.y.quantity === "stroke_m" ? op.stroke_m : op.peak_accel_m_s2 };
  }

  // ------------------------------------------------------------ controls

  els.cancel.addEventListener("click", () => {
    stop("Map cancelled: what is shown is the picture so far. Redraw map to start again.");
    els.holder.dataset.state = "cancelled";
  });
  els.redraw.addEventListener("click", () => draw());
  for (const input of els.axisInputs) {
    input.addEventListener("change", () => {
      if (!input.checked) return;
      state.yAxis = input.value;
      state.cursor = null;
      draw();
    });
  }

  // ------------------------------------------------------------ saving the map

  const fileName = () => `stability-map-${state.yAxis}`;
  els.save[0].addEventListener("click", () => state.svg && saveSvg(state.svg, fileName()));
  els.save[1].addEventListener("click", () => state.svg && savePng(state.svg, fileName()));
  els.save[2].addEventListener("click", () => {
    if (!state.chart) return;
    // One line per stable interval of each row: the edges the map is drawn from.
    const yName = state.chart.y_axis === "stroke" ? "stroke_m" : "peak_accel_m_s2";
    const rows = [];
    for (const row of state.chart.rows) {
      for (const eq of ["inverted", "hanging"]) {
        for (const [from, to] of row[eq].stable_intervals_rpm) rows.push([row.y, eq, from, to]);
      }
    }
    saveCsv(fileName(), [yName, "equilibrium", "stable_from_rpm", "stable_to_rpm"], rows);
  });

  return {
    /** A new rig on the sheet; returns true if the map must be redrawn for it. */
    setRig(rig) {
      const drive = { ...(rig.drive || {}) };
      delete drive.speed_rpm;
      delete drive.stroke_m;
      const nominal = { ...rig };
      delete nominal.spreads; // the spreads do not change the nominal map
      const key = JSON.stringify({ ...nominal, drive });
      state.rig = rig;
      if (key === state.key && els.holder.dataset.state !== "empty") return false;
      state.key = key;
      return true;
    },
    draw,
    /** Stop a running job (a new rig is coming). */
    stop: () => stop("The map will be drawn again for the changed rig."),
    /** Draw ``overlay(svg, axes)`` over every picture (null: nothing). */
    setOverlay(overlay) {
      state.overlay = overlay;
      placeOverlay();
    },
    /** The last checked operating point (numbers from the core's check). */
    setOperatingPoint(result) {
      state.operating = { speed_rpm: result.speed_rpm, stroke_m: result.stroke_m,
                          peak_accel_m_s2: result.peak_accel_m_s2 };
      placeOperatingPoint();
    },
    get running() {
      return state.job !== null;
    },
  };
}
